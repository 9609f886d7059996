# All dependencies come from Debian 12 packages (scripts/install-deps lists them). Each part links
# only the packages it uses (CMakeLists.txt); planmill_deps, all of them, is for tests and benchmarks.
set(HDF5_PREFER_PARALLEL ON)
find_package(MPI REQUIRED COMPONENTS C CXX)
find_package(HDF5 REQUIRED COMPONENTS C)
find_package(Boost REQUIRED)
find_package(spdlog REQUIRED)
find_package(tomlplusplus REQUIRED)
find_package(CLI11 REQUIRED)
find_package(nlohmann_json REQUIRED)
find_package(Eigen3 REQUIRED NO_MODULE)
find_package(Threads REQUIRED)
find_package(OpenSSL REQUIRED COMPONENTS Crypto)
find_path(PCG_INCLUDE_DIR pcg_random.hpp REQUIRED)
# Map ingest: GDAL/OGR reads the GIS layers (its CMake config gives GDAL::GDAL); GeographicLib
# measures on the ellipsoid (Debian 12 ships no CMake config for it, only the library).
find_package(GDAL CONFIG REQUIRED)
find_path(GEOGRAPHICLIB_INCLUDE_DIR GeographicLib/PolygonArea.hpp REQUIRED)
find_library(GEOGRAPHICLIB_LIBRARY NAMES GeographicLib Geographic REQUIRED)

# Header-only PCG streams (base/random.hpp).
add_library(planmill_pcg INTERFACE)
target_include_directories(planmill_pcg SYSTEM INTERFACE ${PCG_INCLUDE_DIR})
# The HDF5 C API; the parallel build's hdf5.h includes mpi.h.
add_library(planmill_hdf5 INTERFACE)
target_include_directories(planmill_hdf5 SYSTEM INTERFACE ${HDF5_INCLUDE_DIRS})
target_link_libraries(planmill_hdf5 INTERFACE HDF5::HDF5 MPI::MPI_C)
add_library(planmill_geographiclib INTERFACE)
target_include_directories(planmill_geographiclib SYSTEM INTERFACE ${GEOGRAPHICLIB_INCLUDE_DIR})
target_link_libraries(planmill_geographiclib INTERFACE ${GEOGRAPHICLIB_LIBRARY})
# MPI for the runner and the CLI.
add_library(planmill_mpi INTERFACE)
target_link_libraries(planmill_mpi INTERFACE MPI::MPI_C MPI::MPI_CXX)

# What every target of the project is built with: the assert level and the sanitizers.
add_library(planmill_flags INTERFACE)
target_compile_definitions(planmill_flags INTERFACE PLANMILL_ASSERT_LEVEL=${PLANMILL_ASSERT_LEVEL})
if(PLANMILL_SANITIZE)
  target_compile_options(planmill_flags INTERFACE -fsanitize=address,undefined -fno-omit-frame-pointer)
  target_link_options(planmill_flags INTERFACE -fsanitize=address,undefined)
endif()

add_library(planmill_deps INTERFACE)
target_link_libraries(planmill_deps INTERFACE
  planmill_flags planmill_pcg planmill_hdf5 planmill_mpi Boost::boost spdlog::spdlog tomlplusplus::tomlplusplus
  CLI11::CLI11 nlohmann_json::nlohmann_json Eigen3::Eigen Threads::Threads OpenSSL::Crypto
  GDAL::GDAL planmill_geographiclib)
