#include "planmill/run/build_info.hpp"

#include <hdf5.h>
#include <mpi.h>

#include "planmill/build_flags.hpp"

namespace planmill {
namespace {

std::string compiler_text() {
#if defined(__clang__)
  return std::string("Clang ") + __clang_version__;
#elif defined(__GNUC__)
  return std::string("GCC ") + __VERSION__;
#else
  return "unknown compiler";
#endif
}

// The target and the extensions the compiler was told it may use (-march and friends).
std::string isa_text() {
  std::string isa;
#if defined(__x86_64__)
  isa = "x86_64";
#elif defined(__aarch64__)
  isa = "aarch64";
#else
  isa = "other";
#endif
  const auto add = [&](bool on, const char* name) {
    if (on) isa += std::string(" ") + name;
  };
#if defined(__x86_64__)
#ifdef __SSE4_2__
  add(true, "sse4.2");
#endif
#ifdef __AVX__
  add(true, "avx");
#endif
#ifdef __AVX2__
  add(true, "avx2");
#endif
#ifdef __FMA__
  add(true, "fma");
#endif
#ifdef __BMI2__
  add(true, "bmi2");
#endif
#ifdef __AVX512F__
  add(true, "avx512f");
#endif
#endif
#if defined(__ARM_NEON)
  add(true, "neon");
#endif
#if defined(__ARM_FEATURE_SVE)
  add(true, "sve");
#endif
#if defined(__FP_FAST_FMA)
  add(true, "fast-fma");
#endif
#if defined(__FAST_MATH__)
  add(true, "fast-math");
#endif
  (void)add;
  if (kNativeIsa) isa += " (native: this host's)";
  return isa;
}

std::string hdf5_text() {
  unsigned major = 0, minor = 0, release = 0;
  if (H5get_libversion(&major, &minor, &release) < 0) return "unknown";
  return std::to_string(major) + "." + std::to_string(minor) + "." + std::to_string(release);
}

std::string mpi_text() {
  char text[MPI_MAX_LIBRARY_VERSION_STRING] = {};
  int length = 0;
  if (MPI_Get_library_version(text, &length) != MPI_SUCCESS) return "unknown";
  std::string line(text, static_cast<std::size_t>(length));
  const auto end = line.find_first_of("\r\n,");  // "Open MPI v4.1.4, package: ..." -> the name
  if (end != std::string::npos) line.resize(end);
  return line;
}

}  // namespace

BuildInfo this_build() {
  return {compiler_text(), std::string(kBuildType) + ": " + kCxxFlags, isa_text(), hdf5_text(),
          mpi_text()};
}

std::vector<std::string> build_differences(const BuildInfo& run, const BuildInfo& here) {
  std::vector<std::string> out;
  const auto compare = [&](const char* what, const std::string& a, const std::string& b) {
    if (a != b) out.push_back(std::string(what) + ": '" + b + "' here, '" + a + "' in the run");
  };
  compare("compiler", run.compiler, here.compiler);
  compare("flags", run.cxx_flags, here.cxx_flags);
  compare("instruction set", run.isa, here.isa);
  compare("HDF5", run.hdf5, here.hdf5);
  compare("MPI", run.mpi, here.mpi);
  return out;
}

}  // namespace planmill
