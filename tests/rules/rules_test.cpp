// Rules: population bounds, county splits and group terms against hand counts, and the
// incremental tracker against an independent recomputation after random move sequences.
#include "planmill/rules/rules.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <cmath>
#include <cstdlib>
#include <new>
#include <set>
#include <vector>

#include "planmill/base/error.hpp"
#include "planmill/base/random.hpp"
#include "planmill/plan/plan.hpp"
#include "small_graphs.hpp"

// Counts heap allocations so that a test can show RuleTracker::move allocates nothing.
namespace {
std::atomic<std::size_t> g_allocations{0};
}
void* operator new(std::size_t size) {
  ++g_allocations;
  if (void* p = std::malloc(size == 0 ? 1 : size)) return p;
  throw std::bad_alloc();
}
void operator delete(void* p) noexcept { std::free(p); }
void operator delete(void* p, std::size_t) noexcept { std::free(p); }

namespace planmill {
namespace {

// Worked example (plain arithmetic): ideal 100,000 and eps 0.05 give
// [95,000, 105,000], even though 0.95 and 1.05 are not exact in binary.
TEST(PopulationBounds, WorkedExample) {
  const PopulationBounds b = population_bounds(1'000'000, 10, 0.05);
  EXPECT_EQ(b.min, 95'000);
  EXPECT_EQ(b.max, 105'000);
  // Ideal 10/3: [0.9 * 3.33, 1.1 * 3.33] = [3.0, 3.67] -> [3, 3] (ceil of lower, floor of upper).
  const PopulationBounds c = population_bounds(10, 3, 0.1);
  EXPECT_EQ(c.min, 3);
  EXPECT_EQ(c.max, 3);
  // Ideal 10/3 with no deviation allowed: no whole number fits, min > max.
  const PopulationBounds d = population_bounds(10, 3, 0.0);
  EXPECT_EQ(d.min, 4);
  EXPECT_EQ(d.max, 3);
  // Ideal 733,499.2 (7,334,992 / 10) at 0.5%: [729,831.704, 737,166.696] -> [729,832, 737,166].
  const PopulationBounds e = population_bounds(7'334'992, 10, 0.005);
  EXPECT_EQ(e.min, 729'832);
  EXPECT_EQ(e.max, 737'166);
}

TEST(RuleTracker, PopulationBoundsAndViolationText) {
  const GraphHandle g_handle = share_graph(test::grid(4, 4));
  const UnitGraph& g = *g_handle;
  // Columns 0-2 (12 units) and column 3 (4 units): ideal 8, eps 0.1 -> [7.2, 8.8] -> [8, 8].
  std::vector<DistrictIndex> a(16, 0);
  for (UnitIndex r = 0; r < 4; ++r) a[r * 4 + 3] = 1;
  Plan plan(g_handle, 2, a);
  RuleSet rules;
  rules.population_tolerance = 0.1;
  RuleTracker tracker(plan, rules);
  EXPECT_EQ(tracker.population_min(), 8);
  EXPECT_EQ(tracker.population_max(), 8);
  EXPECT_FALSE(tracker.population_ok(plan, 0));
  EXPECT_FALSE(tracker.hard_rules_ok(plan));
  const std::string text = tracker.describe_violations(plan);
  EXPECT_NE(text.find("district 1 has population 12"), std::string::npos) << text;
  EXPECT_NE(text.find("4 (50.00% of ideal) above the upper bound 8"), std::string::npos) << text;
  EXPECT_NE(text.find("district 2 has population 4"), std::string::npos) << text;
  EXPECT_NE(text.find("4 (50.00% of ideal) below the lower bound 8"), std::string::npos) << text;
  // Move column 2 across: two halves of 8, all rules met.
  for (UnitIndex r = 0; r < 4; ++r) tracker.move(plan, r * 4 + 2, 1);
  EXPECT_TRUE(tracker.hard_rules_ok(plan));
  EXPECT_EQ(tracker.describe_violations(plan), "");
  // eps = 0 with ideal 16/3: no whole number fits, and the text says so.
  const Plan three(g_handle, 3, test::stripe_assignment(4, 4, 3));
  RuleSet exact;
  exact.population_tolerance = 0.0;
  const RuleTracker none(three, exact);
  EXPECT_GT(none.population_min(), none.population_max());
  EXPECT_FALSE(none.hard_rules_ok(three));
  EXPECT_NE(none.describe_violations(three).find("no district population can meet the bounds"),
            std::string::npos);
}

// County splits counted by hand on a 4x4 grid whose counties are column 0, columns 1-2 and
// column 3.
TEST(RuleTracker, CountySplitsByHand) {
  test::GraphExtras x;
  x.county.resize(16);
  for (UnitIndex u = 0; u < 16; ++u) x.county[u] = u % 4 == 0 ? 0 : (u % 4 == 3 ? 2 : 1);
  const GraphHandle g_handle = share_graph(test::grid(4, 4, x));
  const UnitGraph& g = *g_handle;
  // Top half (rows 0-1) district 0, bottom half district 1: every county meets both -> 3.
  std::vector<DistrictIndex> a(16, 0);
  for (UnitIndex u = 8; u < 16; ++u) a[u] = 1;
  Plan plan(g_handle, 2, a);
  RuleSet rules;
  rules.population_tolerance = 0.5;
  rules.county_splits_max = 2;
  rules.county_splits_weight = 1.0;
  RuleTracker tracker(plan, rules);
  EXPECT_EQ(tracker.county_splits(), 3U);
  EXPECT_FALSE(tracker.hard_rules_ok(plan));
  EXPECT_NE(tracker.describe_violations(plan).find("3 counties are split, the limit is 2"),
            std::string::npos);
  // Column 0 entirely into district 0: county 0 whole, the others still split -> 2.
  tracker.move(plan, 8, 0);
  tracker.move(plan, 12, 0);
  EXPECT_EQ(tracker.county_splits(), 2U);
  EXPECT_TRUE(tracker.hard_rules_ok(plan));
  // Column 3 entirely into district 1: county 2 whole -> 1.
  tracker.move(plan, 3, 1);
  tracker.move(plan, 7, 1);
  EXPECT_EQ(tracker.county_splits(), 1U);
  // Unit 4 (county 0) into district 1 splits county 0 again -> 2; and back -> 1.
  tracker.move(plan, 4, 1);
  EXPECT_EQ(tracker.county_splits(), 2U);
  tracker.move(plan, 4, 0);
  EXPECT_EQ(tracker.county_splits(), 1U);
  EXPECT_DOUBLE_EQ(tracker.energy(plan), 1.0);
}

// Group districts by hand: shares 3/8 and 5/8 against thresholds 0.375 (met at equality) and 0.6.
TEST(RuleTracker, GroupShareTermsByHand) {
  test::GraphExtras x;
  std::vector<double> group(16, 0.0);
  for (UnitIndex u : {0U, 1U, 2U, 8U, 9U, 10U, 11U, 12U}) group[u] = 1.0;
  x.counts.push_back({"group", group});
  const GraphHandle g_handle = share_graph(test::grid(4, 4, x));
  const UnitGraph& g = *g_handle;
  std::vector<DistrictIndex> a(16, 0);
  for (UnitIndex u = 8; u < 16; ++u) a[u] = 1;  // district 0 share 3/8, district 1 share 5/8
  Plan plan(g_handle, 2, a);
  RuleSet rules;
  rules.group_share = {{0, 0.375, 2.0}, {0, 0.6, 0.5}};
  RuleTracker tracker(plan, rules);
  EXPECT_EQ(tracker.group_districts(0), 2U);
  EXPECT_EQ(tracker.group_districts(1), 1U);
  EXPECT_TRUE(tracker.group_term_met(1, 1));
  EXPECT_DOUBLE_EQ(tracker.energy(plan), -2.0 * 2 - 0.5 * 1);
  // Unit 0 (group) to district 1 (9 units, 6 group): shares 2/7 and 6/9 -> term 0 met once,
  // term 1 met once.
  tracker.move(plan, 0, 1);
  EXPECT_EQ(tracker.group_districts(0), 1U);
  EXPECT_EQ(tracker.group_districts(1), 1U);
  EXPECT_FALSE(tracker.group_term_met(0, 0));
}

// Independent recomputation from the unit columns and edges (no Plan tallies involved).
struct Recomputed {
  std::size_t cut = 0, splits = 0;
  std::vector<std::size_t> group_districts;
  double energy = 0.0;
};

Recomputed recompute(const UnitGraph& g, std::span<const DistrictIndex> a, std::size_t k,
                     const RuleSet& rules) {
  Recomputed r;
  for (EdgeIndex e = 0; e < g.edge_count(); ++e)
    r.cut += a[g.edge_first(e)] != a[g.edge_second(e)] ? 1 : 0;
  std::vector<std::set<DistrictIndex>> met(g.counties().names.size());
  for (UnitIndex u = 0; u < g.unit_count(); ++u) met[g.counties().code[u]].insert(a[u]);
  for (const auto& s : met) r.splits += s.size() >= 2 ? 1 : 0;
  r.energy = rules.cut_edges_weight * static_cast<double>(r.cut) +
             rules.county_splits_weight * static_cast<double>(r.splits);
  for (const GroupShareTerm& t : rules.group_share) {
    std::vector<double> count(k, 0.0), pop(k, 0.0);
    for (UnitIndex u = 0; u < g.unit_count(); ++u) {
      count[a[u]] += g.count_column(t.column)[u];
      pop[a[u]] += static_cast<double>(g.population(u));
    }
    std::size_t n = 0;
    for (std::size_t d = 0; d < k; ++d) n += pop[d] > 0 && count[d] / pop[d] >= t.threshold ? 1 : 0;
    r.group_districts.push_back(n);
    r.energy -= t.weight * static_cast<double>(n);
  }
  return r;
}

struct RandomMap {
  GraphHandle graph;
  RuleSet rules;
};

RandomMap random_map(Rng& rng) {
  test::GraphExtras x;
  x.county = test::block_codes(6, 6, 3, 2);  // six counties of 3 x 2
  std::vector<double> g1(36), g2(36);
  for (UnitIndex u = 0; u < 36; ++u) {
    x.population.push_back(1 + uniform_below(rng, 9));
    g1[u] = uniform_below(rng, static_cast<std::uint32_t>(x.population[u]) + 1);
    g2[u] = uniform_below(rng, static_cast<std::uint32_t>(x.population[u]) + 1);
  }
  x.counts = {{"g1", g1}, {"g2", g2}};
  RandomMap m{share_graph(test::grid(6, 6, x)), {}};
  m.rules.population_tolerance = 0.3;
  m.rules.county_splits_max = 4;
  m.rules.cut_edges_weight = 0.37;
  m.rules.county_splits_weight = 1.3;
  m.rules.group_share = {{0, 0.5, 2.1}, {1, 0.3, 0.7}, {0, 0.45, 1.1, 1, 3}};
  // The other hard limits too, so that the allocation test covers their bookkeeping.
  m.rules.population_range_max = 0.5;
  m.rules.county_pieces_max = 10;
  m.rules.county_districts_max = 3;
  return m;
}

void expect_matches(const RuleTracker& t, const Plan& plan, const RuleSet& rules) {
  const Recomputed r = recompute(plan.graph(), plan.assignment(), plan.district_count(), rules);
  EXPECT_EQ(RuleTracker::cut_edges(plan), r.cut);
  EXPECT_EQ(t.county_splits(), r.splits);
  for (std::size_t i = 0; i < rules.group_share.size(); ++i)
    EXPECT_EQ(t.group_districts(i), r.group_districts[i]);
  EXPECT_EQ(t.energy(plan), r.energy);  // exact: counts are integers
  // A tracker built from scratch on the same labels agrees too.
  const Plan fresh(plan.graph_handle(), plan.district_count(),
                   {plan.assignment().begin(), plan.assignment().end()});
  const RuleTracker again(fresh, rules);
  EXPECT_EQ(again.energy(fresh), t.energy(plan));
  EXPECT_EQ(again.hard_rules_ok(fresh), t.hard_rules_ok(plan));
}

TEST(RuleTracker, RandomMovesMatchRecomputation) {
  Rng rng = make_stream(2024, 0);
  for (int trial = 0; trial < 5; ++trial) {
    RandomMap m = random_map(rng);
    Plan plan(m.graph, 4, test::stripe_assignment(6, 6, 4));
    RuleTracker tracker(plan, m.rules);
    expect_matches(tracker, plan, m.rules);
    std::size_t hard_ok = 0;
    for (int step = 0; step < 400; ++step) {
      const UnitIndex u = uniform_below(rng, 36);
      // Mostly moves to a neighbour's district (realistic), sometimes anywhere or nowhere.
      DistrictIndex to = static_cast<DistrictIndex>(uniform_below(rng, 4));
      if (uniform_below(rng, 4) != 0) {
        const auto nb = m.graph->neighbors(u);
        to = plan.district_of(nb[uniform_below(rng, static_cast<std::uint32_t>(nb.size()))]);
      }
      tracker.move(plan, u, to);
      hard_ok += tracker.hard_rules_ok(plan) ? 1 : 0;
      if (step % 10 == 0) expect_matches(tracker, plan, m.rules);
      if (testing::Test::HasFailure()) return;
    }
    expect_matches(tracker, plan, m.rules);
    EXPECT_LT(hard_ok, 400U);  // the walk leaves the allowed set, so both branches are exercised
    tracker.reset(plan);
    expect_matches(tracker, plan, m.rules);
    // A recombination-style relabelling of a whole region at once.
    std::vector<UnitIndex> units;
    std::vector<DistrictIndex> to;
    for (UnitIndex u = 0; u < 36; ++u)
      if (plan.district_of(u) <= 1) {
        units.push_back(u);
        to.push_back(static_cast<DistrictIndex>(u % 6 < 3 ? 0 : 1));
      }
    tracker.assign(plan, units, to);
    expect_matches(tracker, plan, m.rules);
  }
}

TEST(RuleTracker, MoveDoesNotAllocate) {
  Rng rng = make_stream(7, 1);
  RandomMap m = random_map(rng);
  Plan plan(m.graph, 4, test::stripe_assignment(6, 6, 4));
  RuleTracker tracker(plan, m.rules);
  const std::size_t before = g_allocations.load();
  double sink = 0.0;
  for (int step = 0; step < 1000; ++step) {
    tracker.move(plan, uniform_below(rng, 36), static_cast<DistrictIndex>(uniform_below(rng, 4)));
    sink += tracker.energy(plan) + (tracker.hard_rules_ok(plan) ? 1.0 : 0.0);
  }
  EXPECT_EQ(g_allocations.load(), before);
  EXPECT_TRUE(std::isfinite(sink));
}

TEST(RuleTracker, RejectsRulesTheMapCannotSupport) {
  const GraphHandle g_handle = share_graph(test::grid(3, 3));
  const UnitGraph& g = *g_handle;
  const Plan plan(g_handle, 3, test::stripe_assignment(3, 3, 3));
  RuleSet county;
  county.county_splits_max = 1;
  EXPECT_THROW(RuleTracker(plan, county), std::invalid_argument);
  RuleSet group;
  group.group_share = {{0, 0.5, 1.0}};
  EXPECT_THROW(RuleTracker(plan, group), std::invalid_argument);
  RuleSet wide;
  wide.population_tolerance = 1.0;
  EXPECT_THROW(RuleTracker(plan, wide), std::invalid_argument);
}

}  // namespace
}  // namespace planmill
