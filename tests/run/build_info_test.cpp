// The build a run state records says how this binary was compiled: the flags name what the
// compiler was given (its predefined macros tell), and the instruction set names the extensions
// it was allowed and whether they are this host's (PLANMILL_NATIVE).
#include "planmill/run/build_info.hpp"

#include <gtest/gtest.h>

#include <string>

#include "planmill/build_flags.hpp"

namespace planmill {
namespace {

bool has(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

TEST(BuildInfo, RecordedFlagsMatchWhatTheCompilerWasGiven) {
  const BuildInfo build = this_build();  // MPI_Get_library_version may be called before MPI_Init
  EXPECT_TRUE(has(build.cxx_flags, std::string(kBuildType) + ": ")) << build.cxx_flags;
  // Contraction into fused multiply-adds is off in every build (CMakeLists.txt).
  EXPECT_TRUE(has(build.cxx_flags, "-ffp-contract=off")) << build.cxx_flags;
#if defined(__OPTIMIZE__)
  EXPECT_TRUE(has(build.cxx_flags, "-O1") || has(build.cxx_flags, "-O2") || has(build.cxx_flags, "-O3") ||
              has(build.cxx_flags, "-Os") || has(build.cxx_flags, "-Ofast") || has(build.cxx_flags, "-O "))
      << build.cxx_flags;
#else
  EXPECT_FALSE(has(build.cxx_flags, "-O2") || has(build.cxx_flags, "-O3")) << build.cxx_flags;
#endif
#if defined(NDEBUG)
  EXPECT_TRUE(has(build.cxx_flags, "-DNDEBUG")) << build.cxx_flags;
#endif
  EXPECT_EQ(has(build.cxx_flags, "-march=native"), kNativeIsa) << build.cxx_flags;
}

TEST(BuildInfo, InstructionSetNamesTheExtensionsAndANativeBuild) {
  const BuildInfo build = this_build();
#if defined(__x86_64__)
  EXPECT_EQ(build.isa.rfind("x86_64", 0), 0U) << build.isa;
#endif
#if defined(__AVX2__)
  EXPECT_TRUE(has(build.isa, " avx2")) << build.isa;
#else
  EXPECT_FALSE(has(build.isa, " avx2")) << build.isa;
#endif
#if defined(__FMA__)
  EXPECT_TRUE(has(build.isa, " fma")) << build.isa;
#else
  EXPECT_FALSE(has(build.isa, " fma")) << build.isa;
#endif
  EXPECT_EQ(has(build.isa, "(native: this host's)"), kNativeIsa) << build.isa;
  // A build for another instruction set is named as a difference (a resume refuses it).
  BuildInfo other = build;
  other.isa += " avx512f";
  ASSERT_EQ(build_differences(build, other).size(), 1U);
  EXPECT_TRUE(has(build_differences(build, other)[0], "instruction set")) << build_differences(build, other)[0];
}

}  // namespace
}  // namespace planmill
