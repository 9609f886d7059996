// The full-length self-test (100,000 recorded plans per case): the same exact targets as the
// quick cases, with ten times the samples, so a bias of about a third of the quick run's noise
// would show. Label "slow": `ctest --test-dir build -L slow`.
#include <gtest/gtest.h>

#include "planmill/selftest/selftest.hpp"

namespace planmill {
namespace {

class FullSelftest : public ::testing::TestWithParam<std::size_t> {};

TEST_P(FullSelftest, PassesAgainstExactEnumeration) {
  const SelftestResult r = run_selftest(builtin_selftest_cases(false).at(GetParam()));
  EXPECT_TRUE(r.all_valid) << r.name;
  EXPECT_TRUE(r.passed) << r.name << ": TV " << r.total_variation << ", p " << r.p_value << " " << r.note;
}

INSTANTIATE_TEST_SUITE_P(All, FullSelftest, ::testing::Range<std::size_t>(0, builtin_selftest_cases(false).size()));

}  // namespace
}  // namespace planmill
