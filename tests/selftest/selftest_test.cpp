// The exact self-test itself: its chi-square tail against a published table, its exact targets
// against worked values, every built-in case passing, and wrong acceptance ratios turning it red.
#include <gtest/gtest.h>

#include <cmath>

#include "planmill/selftest/selftest.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

TEST(ChiSquare, UpperTailMatchesPublishedCriticalValues) {
  // Critical values from the chi-square table of the NIST/SEMATECH e-Handbook of Statistical
  // Methods, section 1.3.6.7.4 (upper-tail probabilities 0.05 and 0.01).
  EXPECT_NEAR(chi_square_upper_tail(3.841, 1), 0.05, 2e-5);
  EXPECT_NEAR(chi_square_upper_tail(11.070, 5), 0.05, 2e-5);
  EXPECT_NEAR(chi_square_upper_tail(18.307, 10), 0.05, 2e-5);
  EXPECT_NEAR(chi_square_upper_tail(43.773, 30), 0.05, 2e-5);
  EXPECT_NEAR(chi_square_upper_tail(9.210, 2), 0.01, 2e-5);
  EXPECT_NEAR(chi_square_upper_tail(135.807, 100), 0.01, 2e-5);
  // df = 2 is the exponential law: Q = exp(-x/2) exactly.
  EXPECT_NEAR(chi_square_upper_tail(7.0, 2), std::exp(-3.5), 1e-14);
}

SelftestCase grid_case(std::size_t k, double deviation, KernelKind kind, double gamma, double beta) {
  SelftestCase c;
  c.graph = std::make_shared<const UnitGraph>(test::grid(4, 4));
  c.districts = k;
  c.rules.population_tolerance = deviation;
  c.kernel.kind = kind;
  c.kernel.gamma = gamma;
  c.kernel.beta = beta;
  c.samples = 10000;
  // Exact equality and unit populations: at most one balanced edge per tree, so M = 1 is exact.
  if (deviation == 0.0) c.kernel.balanced_cut_bound = 1;
  return c;
}

double expectation(const SelftestResult& r, const GraphHandle& g_handle, std::size_t k) {
  double mean = 0.0;
  for (const auto& p : r.plans) {
    std::vector<DistrictIndex> labels;
    for (char ch : p.plan) labels.push_back(static_cast<DistrictIndex>(ch - 'a'));
    mean += p.exact * static_cast<double>(Plan(g_handle, k, labels).cut_edge_count());
  }
  return mean;
}

TEST(SelftestTargets, SpanningTreeLawOnTheFourByFourGridMatchesWorkedValues) {
  // Worked values (docs/kernels.md, "Check values"; derived by a hand-checkable enumeration outside
  // planmill, not by its code): on the 4x4 grid into four of 4,
  // Z = 654, P(four 2x2 squares) = 256/654, E[cut edges] = 3140/327; under the uniform law (OEIS
  // A172477: 117 plans) E[cut edges] = 1348/117.
  auto tree_law = grid_case(4, 0.0, KernelKind::merge_split, 1.0, 0.0);
  tree_law.samples = 1;
  const auto r = run_selftest(tree_law);
  ASSERT_EQ(r.valid_plans, 117u);
  EXPECT_NEAR(expectation(r, tree_law.graph, 4), 3140.0 / 327.0, 1e-9);
  double squares = 0.0;
  for (const auto& p : r.plans)
    if (p.plan == "aabbaabbccddccdd") squares = p.exact;
  EXPECT_NEAR(squares, 256.0 / 654.0, 1e-12);
  auto uniform = grid_case(4, 0.0, KernelKind::merge_split, 0.0, 0.0);
  uniform.samples = 1;
  EXPECT_NEAR(expectation(run_selftest(uniform), uniform.graph, 4), 1348.0 / 117.0, 1e-9);
}

TEST(SelftestTargets, TwoHalvesOfTheFourByFourGrid) {
  // Worked values (docs/kernels.md, "Check values"): 4x4 into two of 8 has 70 plans; spanning-tree law Z = 10660 with
  // E[cut] = 2672/533; uniform E[cut] = 264/35.
  auto tree_law = grid_case(2, 0.0, KernelKind::merge_split, 1.0, 0.0);
  tree_law.samples = 1;
  const auto r = run_selftest(tree_law);
  ASSERT_EQ(r.valid_plans, 70u);
  EXPECT_NEAR(expectation(r, tree_law.graph, 2), 2672.0 / 533.0, 1e-9);
  auto uniform = grid_case(2, 0.0, KernelKind::merge_split, 0.0, 0.0);
  uniform.samples = 1;
  EXPECT_NEAR(expectation(run_selftest(uniform), uniform.graph, 2), 264.0 / 35.0, 1e-9);
}

TEST(SelftestTargets, WeightedTreeLawOnDominoTilingsMatchesAHandWorkedValue) {
  // Hand-worked: the 2x3 grid into three districts of 2 is a domino tiling: three vertical
  // dominoes, or one vertical and two horizontal stacked on the left or the right. With the two
  // rows as counties and county tree weight 2, a horizontal domino has tau_w = 2, a vertical one
  // tau_w = 1, so under gamma = 1 the weights are 1, 4, 4 and P(three vertical) = 1/9.
  SelftestCase c;
  test::GraphExtras rows;
  rows.county = {0, 0, 0, 1, 1, 1};
  c.graph = std::make_shared<const UnitGraph>(test::grid(2, 3, rows));
  c.districts = 3;
  c.rules.population_tolerance = 0.0;
  c.kernel.kind = KernelKind::merge_split;
  c.kernel.gamma = 1.0;
  c.kernel.beta = 0.0;
  c.kernel.county_tree_weight = 2.0;
  c.samples = 20000;
  const auto r = run_selftest(c);
  ASSERT_EQ(r.valid_plans, 3u);
  for (const auto& p : r.plans) {
    if (p.plan == "abcabc") EXPECT_NEAR(p.exact, 1.0 / 9.0, 1e-12);
    else if (p.plan == "abbacc" || p.plan == "aabccb") EXPECT_NEAR(p.exact, 4.0 / 9.0, 1e-12);
    else ADD_FAILURE() << "unexpected plan " << p.plan;
  }
  EXPECT_TRUE(r.passed) << "TV " << r.total_variation << " p " << r.p_value;
}

class BuiltinCase : public ::testing::TestWithParam<std::size_t> {};

TEST_P(BuiltinCase, PassesAgainstExactEnumeration) {
  const auto cases = builtin_selftest_cases(true);
  const SelftestResult r = run_selftest(cases.at(GetParam()));
  EXPECT_TRUE(r.all_valid) << r.name;
  EXPECT_TRUE(r.passed) << r.name << ": TV " << r.total_variation << ", p " << r.p_value << ", visited "
                        << r.plans_visited << "/" << r.valid_plans << " " << r.note;
}

INSTANTIATE_TEST_SUITE_P(All, BuiltinCase, ::testing::Range<std::size_t>(0, builtin_selftest_cases(true).size()));

// The self-test must have the power to see a wrong acceptance ratio (wrong acceptance ratios are
// known to leave TV distances of about 0.07-0.19 on such maps; from the team's method notes). Both must fail; the same cases with the correction
// pass above (measured here: TV about 0.07 for merge-split and 0.09 for flip without it, against
// about 0.03 with it).
TEST(SelftestPower, MergeSplitWithoutTheCutRatioFails) {
  auto c = grid_case(4, 0.0, KernelKind::merge_split, 1.0, 0.0);
  c.kernel.drop_hastings_factor = true;
  const auto r = run_selftest(c);
  EXPECT_FALSE(r.passed) << "TV " << r.total_variation << " p " << r.p_value;
}

// Four 2x2 counties on the 4x4 grid, county tree weight 5, uniform target: the weighted-tree
// factor |E(A',B')| w(E(A,B)) / (|E(A,B)| w(E(A',B'))) left out must be seen.
TEST(SelftestPower, WeightedMergeSplitWithoutTheTreeWeightFactorFails) {
  auto c = grid_case(4, 0.0, KernelKind::merge_split, 0.0, 0.0);
  test::GraphExtras x;
  x.county = test::block_codes(4, 4, 2, 2);
  c.graph = std::make_shared<const UnitGraph>(test::grid(4, 4, x));
  c.kernel.county_tree_weight = 5.0;
  const auto right = run_selftest(c);
  EXPECT_TRUE(right.passed) << "TV " << right.total_variation << " p " << right.p_value;
  c.kernel.drop_tree_weight_factor = true;
  const auto wrong = run_selftest(c);
  EXPECT_FALSE(wrong.passed) << "TV " << wrong.total_variation << " p " << wrong.p_value;
  RecordProperty("tv_with_factor", std::to_string(right.total_variation));
  RecordProperty("tv_without_factor", std::to_string(wrong.total_variation));
}

TEST(SelftestPower, FlipWithoutTheMoveCountRatioFails) {
  auto c = grid_case(2, 0.125, KernelKind::flip, 0.0, 0.0);
  c.kernel.drop_hastings_factor = true;
  const auto r = run_selftest(c);
  EXPECT_FALSE(r.passed) << "TV " << r.total_variation << " p " << r.p_value;
}

TEST(SelftestPower, AWrongTemperatureFails) {
  // The chain runs at beta = 1 while the exact target is computed at beta = 0.5.
  auto c = grid_case(2, 0.125, KernelKind::flip, 0.0, 1.0);
  c.rules.cut_edges_weight = 0.5;
  SelftestCase wrong = c;
  wrong.kernel.beta = 2.0;  // same energy scale as beta 1 with weight 1
  const auto right = run_selftest(c);
  EXPECT_TRUE(right.passed) << right.p_value;
  wrong.rules.cut_edges_weight = 0.5;
  // Build the comparison by hand: run at beta 2, compare against the beta-1 exact law.
  const auto at_two = run_selftest(wrong);
  double tv = 0.0;
  for (std::size_t i = 0; i < right.plans.size(); ++i)
    tv += std::abs(static_cast<double>(at_two.plans[i].seen) / static_cast<double>(at_two.samples) - right.plans[i].exact);
  EXPECT_GT(tv / 2.0, 0.05);
}

}  // namespace
}  // namespace planmill
