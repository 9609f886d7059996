// jobs/demo-packed/make-plan regenerates the shipped plan.csv byte for byte (the run's streams
// depend on its seed and chains only; jobs/demo-packed/README.md).
#include <gtest/gtest.h>

#include <string>

#include "run_jobs.hpp"

namespace planmill {
namespace {

TEST(DemoPacked, MakePlanRegeneratesTheShippedPlan) {
  const auto dir = test::scratch_dir("planmill-demo-packed", std::to_string(::getpid()));
  const std::string made = (dir / "plan.csv").string();
  ASSERT_EQ(test::shell(PLANMILL_SOURCE_DIR "/jobs/demo-packed/make-plan " + std::string(PLANMILL_BINARY) + " " +
                        (dir / "work").string() + " " + made + " >/dev/null 2>&1"),
            0);
  const std::string shipped = test::read_text(PLANMILL_SOURCE_DIR "/jobs/demo-packed/plan.csv");
  ASSERT_FALSE(shipped.empty());
  EXPECT_TRUE(test::read_text(made) == shipped) << "make-plan no longer reproduces jobs/demo-packed/plan.csv";
  std::filesystem::remove_all(dir);
}

}  // namespace
}  // namespace planmill
