#pragma once
// What built the plans of a run: the compiler, its flags, the instruction set the binary was
// compiled for, and the HDF5 and MPI libraries it runs with. Another build may draw other plans
// from the same snapshot (floating point contracted or vectorised differently, another library),
// so a resume by a build that differs is refused unless the user says otherwise.
#include <string>
#include <vector>

namespace planmill {

struct BuildInfo {
  std::string compiler;   // e.g. "GCC 12.2.0", from the compiler's predefined macros
  std::string cxx_flags;  // build type and C++ flags, from CMake
  std::string isa;        // target architecture and instruction-set extensions compiled for
  std::string hdf5;       // version of the HDF5 library linked (at run time)
  std::string mpi;        // the MPI library's version line (at run time)
  friend bool operator==(const BuildInfo&, const BuildInfo&) = default;
};

// This binary's build. Call after MPI_Init.
[[nodiscard]] BuildInfo this_build();

// "compiler: GCC 12.2.0 here, GCC 11.4.0 in the run", one entry per field that differs.
[[nodiscard]] std::vector<std::string> build_differences(const BuildInfo& run, const BuildInfo& here);

}  // namespace planmill
