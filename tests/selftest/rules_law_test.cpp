// Kernels keep every hard limit (overall range, county and municipality caps, group-share counts)
// and their laws still hold with the limits on: the chain's frequencies against the exact target
// over the enumerated valid plans (exact enumeration, src/enumerate), on a small map with counties
// and towns.
#include <gtest/gtest.h>

#include "planmill/selftest/selftest.hpp"
#include "limits_map.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

GraphHandle small_map() { return test::limits_map(); }

SelftestCase limited(KernelKind kind, double gamma, double beta) {
  SelftestCase c;
  c.name = "3x4 towns and counties";
  c.graph = small_map();
  c.districts = 3;
  c.rules.population_tolerance = 0.4;
  c.rules.population_range_max = 0.5;
  c.rules.county_pieces_max = 4;
  c.rules.municipality_districts_max = 2;
  c.rules.group_share = {{0, 0.3, 0.0, 1, 2}};
  c.rules.cut_edges_weight = 0.5;
  c.kernel.kind = kind;
  c.kernel.gamma = gamma;
  c.kernel.beta = beta;
  c.samples = 10000;
  return c;
}

TEST(SelftestWithLimits, TheLimitsRemovePlans) {
  SelftestCase with = limited(KernelKind::merge_split, 0.0, 0.0);
  SelftestCase without = with;
  without.rules = RuleSet{};
  without.rules.population_tolerance = 0.4;
  with.samples = without.samples = 1;
  const auto a = run_selftest(with), b = run_selftest(without);
  EXPECT_GT(a.valid_plans, 10u);
  EXPECT_LT(a.valid_plans, b.valid_plans);
}

TEST(SelftestWithLimits, MergeSplitLawHolds) {
  const auto r = run_selftest(limited(KernelKind::merge_split, 0.5, 0.6));
  EXPECT_TRUE(r.all_valid) << r.note;
  EXPECT_TRUE(r.passed) << "TV " << r.total_variation << ", p " << r.p_value << ", " << r.valid_plans << " plans";
}

TEST(SelftestWithLimits, FlipLawHolds) {
  const auto r = run_selftest(limited(KernelKind::flip, 0.0, 0.6));
  EXPECT_TRUE(r.all_valid) << r.note;
  EXPECT_TRUE(r.passed) << "TV " << r.total_variation << ", p " << r.p_value << ", " << r.valid_plans << " plans";
}

TEST(SelftestWithLimits, RecombinationStaysValidAndReachesEveryPlan) {
  SelftestCase c = limited(KernelKind::recombination, 0.0, 0.0);
  c.rules.cut_edges_weight = 0.0;
  c.thin = 2;
  const auto r = run_selftest(c);
  EXPECT_TRUE(r.all_valid) << r.note;
  EXPECT_TRUE(r.passed) << r.note;
}

}  // namespace
}  // namespace planmill
