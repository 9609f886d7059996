# All dependencies come from Debian 12 packages (scripts/install-deps lists them).
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

add_library(planmill_deps INTERFACE)
target_include_directories(planmill_deps SYSTEM INTERFACE ${PCG_INCLUDE_DIR} ${HDF5_INCLUDE_DIRS})
target_link_libraries(planmill_deps INTERFACE
  MPI::MPI_C MPI::MPI_CXX HDF5::HDF5 Boost::boost spdlog::spdlog tomlplusplus::tomlplusplus
  CLI11::CLI11 nlohmann_json::nlohmann_json Eigen3::Eigen Threads::Threads OpenSSL::Crypto)

if(PLANMILL_SANITIZE)
  target_compile_options(planmill_deps INTERFACE -fsanitize=address,undefined -fno-omit-frame-pointer)
  target_link_options(planmill_deps INTERFACE -fsanitize=address,undefined)
endif()
