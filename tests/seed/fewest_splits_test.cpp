// "Split only as needed" and the seed search's aims. The fewest county splits are checked against
// exact enumeration of every plan of small maps (enumerate/enumerate.hpp, which shares no code with
// the search); first plans under municipality caps and group-share counts are checked against the
// rules they must meet.
#include <gtest/gtest.h>

#include <algorithm>
#include <limits>
#include <set>

#include "planmill/base/error.hpp"
#include "planmill/enumerate/enumerate.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

// The fewest counties any valid plan splits, by visiting every plan.
std::size_t exact_fewest_splits(const UnitGraph& g, std::size_t k, std::int64_t lo, std::int64_t hi) {
  std::size_t best = std::numeric_limits<std::size_t>::max();
  const std::size_t counties = g.counties().names.size();
  for_each_plan(g, k, lo, hi, [&](std::span<const DistrictIndex> d) {
    std::vector<std::set<DistrictIndex>> meets(counties);
    for (UnitIndex u = 0; u < d.size(); ++u) meets[g.counties().code[u]].insert(d[u]);
    std::size_t split = 0;
    for (const auto& s : meets) split += s.size() > 1;
    best = std::min(best, split);
  });
  return best;
}

struct CountyMap {
  const char* name;
  std::vector<std::uint32_t> county;  // 4 x 4 grid, row by row
  std::size_t lower_bound;            // counties of more than 4 units (one district's people)
};

TEST(FewestSplits, EqualsTheExactFewestOnSmallMapsAndNeverBeatsTheLowerBound) {
  const std::vector<CountyMap> maps = {
      // County 0 holds 5 units, more than a district of 4: it must be split, and one split does.
      {"one county too big", {0, 0, 0, 1, 0, 0, 1, 1, 2, 2, 3, 3, 2, 2, 3, 3}, 1},
      // County 0 is two opposite corners: no district of 4 holds both, so it is split although
      // it is small; the bound (0) is then below the fewest.
      {"a county in two corners", {0, 1, 1, 2, 1, 1, 2, 2, 3, 3, 4, 4, 3, 3, 4, 0}, 0},
      // Stripes of 2 x 4 across 4 x 1 districts.
      {"crosswise stripes", {0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 1, 1, 1, 1}, 2},
  };
  for (const CountyMap& m : maps) {
    test::GraphExtras extras;
    extras.county = m.county;
    const GraphHandle g = share_graph(test::grid(4, 4, extras));
    RuleSet rules;
    rules.population_tolerance = 0.0;  // four districts of exactly four units
    const std::size_t exact = exact_fewest_splits(*g, 4, 4, 4);
    Rng rng = make_stream(11, 0);
    const FewestSplits f = fewest_county_splits(g, 4, rules, rng, 60);
    EXPECT_EQ(f.lower_bound, m.lower_bound) << m.name;
    EXPECT_LE(f.lower_bound, exact) << m.name;
    EXPECT_EQ(f.found, exact) << m.name;
    EXPECT_EQ(f.proven(), exact == m.lower_bound) << m.name;
    ASSERT_FALSE(f.plans.empty()) << m.name;
    for (const Plan& p : f.plans) {
      RuleSet capped = rules;
      capped.county_splits_max = f.found;
      const RuleTracker tracker(p, capped);
      EXPECT_TRUE(tracker.hard_rules_ok(p) && p.all_connected()) << m.name;
      EXPECT_EQ(tracker.county_splits(), f.found) << m.name;
    }
    for (std::size_t i = 0; i < f.plans.size(); ++i)
      for (std::size_t j = i + 1; j < f.plans.size(); ++j) EXPECT_FALSE(f.plans[i] == f.plans[j]) << m.name;
  }
}

TEST(FewestSplits, IgnoresAGivenCapAndHoldsTheOtherRules) {
  test::GraphExtras extras;
  extras.county = {0, 0, 0, 1, 0, 0, 1, 1, 2, 2, 3, 3, 2, 2, 3, 3};
  const GraphHandle g = share_graph(test::grid(4, 4, extras));
  RuleSet rules;
  rules.population_tolerance = 0.0;
  rules.county_splits_max = 0;  // replaced by what the search finds
  rules.county_pieces_max = 4;  // four districts in four pieces: no county may be split at all
  Rng rng = make_stream(3, 0);
  try {
    (void)fewest_county_splits(g, 4, rules, rng, 20);
    FAIL() << "county 0 must be split, so four pieces cannot be met";
  } catch (const InfeasibleError& e) {
    EXPECT_NE(std::string(e.what()).find("county pieces"), std::string::npos) << e.what();
  }
}

TEST(SeedPlan, MeetsAMunicipalityCap) {
  // A 12 x 10 grid in 5 districts of 23 to 25 units, towns of 12 x 2 (24 units): a cap of one split
  // towns, which few uniform cuts meet.
  test::GraphExtras extras;
  extras.municipality = test::block_codes(12, 10, 12, 2);
  const GraphHandle g = share_graph(test::grid(12, 10, extras));
  RuleSet rules;
  rules.population_tolerance = 0.05;
  rules.municipality_splits_max = 1;
  for (std::uint64_t seed = 1; seed <= 3; ++seed) {
    Rng rng = make_stream(seed, 0);
    const Plan plan = random_seed_plan(g, 5, rules, rng);
    const RuleTracker tracker(plan, rules);
    EXPECT_TRUE(plan.all_connected() && tracker.hard_rules_ok(plan)) << seed;
    EXPECT_LE(tracker.municipality_splits(), 1U) << seed;
  }
}

TEST(SeedPlan, MeetsAGroupShareCountThatUniformCutsRarelyMeet) {
  // A 10 x 10 grid in 5 districts of 20; the group lives only in a 4 x 5 corner (20 units, one
  // district's worth), and two districts must be at least half group: each must hold 10 of them.
  test::GraphExtras extras;
  std::vector<double> group(100, 0.0);
  for (std::uint32_t r = 0; r < 5; ++r)
    for (std::uint32_t c = 0; c < 4; ++c) group[r * 10 + c] = 1.0;
  extras.counts = {{"grp", group}};
  extras.groups = {0};
  const GraphHandle g = share_graph(test::grid(10, 10, extras));
  RuleSet rules;
  rules.population_tolerance = 0.0;
  rules.group_share.push_back({0, 0.5, 0.0, 2, std::nullopt});
  for (std::uint64_t seed = 1; seed <= 3; ++seed) {
    Rng rng = make_stream(seed, 0);
    const Plan plan = random_seed_plan(g, 5, rules, rng);
    const RuleTracker tracker(plan, rules);
    EXPECT_TRUE(plan.all_connected() && tracker.hard_rules_ok(plan)) << seed;
    EXPECT_GE(tracker.group_districts(0), 2U) << seed;
  }
}

TEST(SeedPlan, ACeilingOnGroupDistrictsIsMet) {
  test::GraphExtras extras;
  std::vector<double> group(100, 0.0);
  for (std::uint32_t u = 0; u < 100; ++u) group[u] = (u % 10) < 4 ? 1.0 : 0.0;  // 40% group, in four columns
  extras.counts = {{"grp", group}};
  extras.groups = {0};
  const GraphHandle g = share_graph(test::grid(10, 10, extras));
  RuleSet rules;
  rules.population_tolerance = 0.0;
  rules.group_share.push_back({0, 0.5, 0.0, std::nullopt, 1});  // at most one majority-group district
  Rng rng = make_stream(5, 0);
  const Plan plan = random_seed_plan(g, 5, rules, rng);
  const RuleTracker tracker(plan, rules);
  EXPECT_TRUE(tracker.hard_rules_ok(plan));
  EXPECT_LE(tracker.group_districts(0), 1U);
}

}  // namespace
}  // namespace planmill
