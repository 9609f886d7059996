// Seed plans: valid when a valid plan exists, a clear error when none can be found, and a user's
// plan checked with the district and amount of every violation.
#include <gtest/gtest.h>

#include "planmill/base/error.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

TEST(SeedPlan, RandomSeedsAreValidForManyShapes) {
  const GraphHandle g_handle = share_graph(test::grid(12, 10));
  const UnitGraph& g = *g_handle;
  for (std::size_t k : {2u, 3u, 5u, 8u, 12u}) {
    RuleSet rules;
    rules.population_tolerance = 0.05;
    Rng rng = make_stream(7, k);
    const Plan plan = random_seed_plan(g_handle, k, rules, rng);
    EXPECT_TRUE(plan.all_connected()) << k;
    EXPECT_LE(plan.max_population_deviation(), 0.05 + 1e-12) << k;
    const RuleTracker tracker(plan, rules);
    EXPECT_TRUE(tracker.hard_rules_ok(plan));
  }
}

// One tree per split makes most attempts fail at some split; every restart must start again from
// the whole map (a restart once began from the units left over by the failed attempt).
TEST(SeedPlan, RestartsAfterAFailedLaterSplitStartFromTheWholeMap) {
  const GraphHandle g_handle = share_graph(test::grid(6, 6));
  const UnitGraph& g = *g_handle;
  RuleSet rules;
  rules.population_tolerance = 0.0;  // three districts of exactly 12 units
  for (std::uint64_t seed = 1; seed <= 5; ++seed) {
    Rng rng = make_stream(seed, 0);
    const Plan plan = random_seed_plan(g_handle, 3, rules, rng, {1, 5000});
    EXPECT_TRUE(plan.all_connected()) << seed;
    for (DistrictIndex d = 0; d < 3; ++d) EXPECT_EQ(plan.unit_count(d), 12U) << seed;
  }
}

TEST(SeedPlan, ImpossibleToleranceIsAnInfeasibleErrorAfterBoundedEffort) {
  // A path of 5 units of population 1 cannot be cut into 2 districts of exactly 2.5.
  const GraphHandle g_handle = share_graph(test::graph_from_edges(5, test::path_edges(5)));
  const UnitGraph& g = *g_handle;
  RuleSet rules;
  rules.population_tolerance = 0.0;
  Rng rng = make_stream(1, 0);
  try {
    (void)random_seed_plan(g_handle, 2, rules, rng, {20, 3});
    FAIL();
  } catch (const InfeasibleError& e) {
    EXPECT_NE(std::string(e.what()).find("districts.start"), std::string::npos) << e.what();
  }
}

TEST(SeedPlan, UserPlanViolationsNameTheDistrict) {
  const GraphHandle g_handle = share_graph(test::grid(2, 4));  // 0 1 2 3 / 4 5 6 7
  const UnitGraph& g = *g_handle;
  // District 1 = {0, 3}: not contiguous; district 2 has the remaining 6 units.
  Plan plan(g_handle, 2, {0, 1, 1, 0, 1, 1, 1, 1});
  RuleSet rules;
  rules.population_tolerance = 0.1;
  try {
    check_seed_plan(plan, rules, "start.csv");
    FAIL();
  } catch (const InfeasibleError& e) {
    const std::string m = e.what();
    EXPECT_NE(m.find("start.csv"), std::string::npos) << m;
    EXPECT_NE(m.find("district 1 is not contiguous"), std::string::npos) << m;
  }
}

}  // namespace
}  // namespace planmill
