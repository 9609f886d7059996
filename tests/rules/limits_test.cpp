// The hard limits beyond the population tolerance (overall range, county and municipality splits,
// pieces and districts per area, group-share counts): the tracker against a recomputation from the
// unit columns after random moves, and the enumerated valid plans of a small map with counties and
// towns against brute force over every labelling (exact enumeration, the check outside the code
// under test: it shares neither the enumerator nor the tracker).
#include <gtest/gtest.h>

#include <algorithm>
#include <set>
#include <string>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/enumerate/enumerate.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/rules/rules.hpp"
#include "limits_map.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

// Each rule recomputed from labels alone, by its definition in docs/jobs.md.
bool naive_limits_ok(const UnitGraph& g, std::span<const DistrictIndex> a, std::size_t k, const RuleSet& r) {
  std::vector<std::int64_t> pop(k, 0);
  for (UnitIndex u = 0; u < g.unit_count(); ++u) pop[a[u]] += g.population(u);
  if (r.population_range_max) {
    const auto [lo, hi] = std::minmax_element(pop.begin(), pop.end());
    // r is a dyadic fraction in these tests, so the product is exact.
    if (static_cast<double>((*hi - *lo) * static_cast<std::int64_t>(k)) >
        *r.population_range_max * static_cast<double>(g.total_population()))
      return false;
  }
  const auto areas_ok = [&](const UnitCodes& codes, const std::optional<std::size_t>& splits,
                            const std::optional<std::size_t>& pieces, const std::optional<std::size_t>& per_area) {
    std::vector<std::set<DistrictIndex>> met(codes.names.size());
    for (UnitIndex u = 0; u < g.unit_count(); ++u)
      if (codes.code[u] != UnitCodes::kNone) met[codes.code[u]].insert(a[u]);
    std::size_t split = 0, total = 0, widest = 0;
    for (const auto& s : met) {
      split += s.size() >= 2 ? 1 : 0;
      total += s.size();
      widest = std::max(widest, s.size());
    }
    return (!splits || split <= *splits) && (!pieces || total <= *pieces) && (!per_area || widest <= *per_area);
  };
  if (g.has_counties() && !areas_ok(g.counties(), r.county_splits_max, r.county_pieces_max, r.county_districts_max))
    return false;
  if (g.has_municipalities() && !areas_ok(g.municipalities(), r.municipality_splits_max, r.municipality_pieces_max,
                                          r.municipality_districts_max))
    return false;
  for (const GroupShareTerm& t : r.group_share) {
    std::vector<double> count(k, 0.0);
    for (UnitIndex u = 0; u < g.unit_count(); ++u) count[a[u]] += g.count_column(t.column)[u];
    std::size_t n = 0;
    for (std::size_t d = 0; d < k; ++d)
      n += pop[d] > 0 && count[d] / static_cast<double>(pop[d]) >= t.threshold ? 1 : 0;
    if ((t.at_least && n < *t.at_least) || (t.at_most && n > *t.at_most)) return false;
  }
  return true;
}

std::int64_t naive_spread(const Plan& plan) {
  std::vector<std::int64_t> pop(plan.district_count(), 0);
  for (UnitIndex u = 0; u < plan.unit_count(); ++u) pop[plan.district_of(u)] += plan.graph().population(u);
  const auto [lo, hi] = std::minmax_element(pop.begin(), pop.end());
  return *hi - *lo;
}

GraphHandle small_map() { return test::limits_map(); }

std::string key_of(std::span<const DistrictIndex> labels, std::size_t k) {
  std::vector<DistrictIndex> map(k, kNoDistrict);
  std::string key(labels.size(), ' ');
  DistrictIndex next = 0;
  for (std::size_t u = 0; u < labels.size(); ++u) {
    if (map[labels[u]] == kNoDistrict) map[labels[u]] = next++;
    key[u] = static_cast<char>('a' + map[labels[u]]);
  }
  return key;
}

// Every labelling of the map into k districts: nonempty, contiguous (by breadth-first search on the
// edge list), populations in bounds, and the limits by their definitions.
std::set<std::string> brute_force(const UnitGraph& g, std::size_t k, const RuleSet& rules) {
  const std::size_t n = g.unit_count();
  const PopulationBounds b = population_bounds(g.total_population(), k, rules.population_tolerance);
  std::vector<DistrictIndex> a(n, 0);
  std::set<std::string> found;
  for (;;) {
    bool ok = true;
    for (DistrictIndex d = 0; d < k && ok; ++d) {
      std::int64_t p = 0;
      std::vector<UnitIndex> members;
      for (UnitIndex u = 0; u < n; ++u)
        if (a[u] == d) members.push_back(u), p += g.population(u);
      if (members.empty() || p < b.min || p > b.max) {
        ok = false;
        break;
      }
      std::vector<char> seen(n, 0);
      std::vector<UnitIndex> stack{members[0]};
      seen[members[0]] = 1;
      std::size_t reached = 1;
      while (!stack.empty()) {
        const UnitIndex u = stack.back();
        stack.pop_back();
        for (EdgeIndex e = 0; e < g.edge_count(); ++e) {
          const bool touches = g.edge_first(e) == u || g.edge_second(e) == u;
          const UnitIndex v = g.edge_first(e) == u ? g.edge_second(e) : g.edge_first(e);
          if (touches && a[v] == d && !seen[v]) seen[v] = 1, ++reached, stack.push_back(v);
        }
      }
      ok = reached == members.size();
    }
    if (ok && naive_limits_ok(g, a, k, rules)) found.insert(key_of(a, k));
    std::size_t i = 0;  // next labelling, as a base-k counter
    while (i < n && ++a[i] == k) a[i++] = 0;
    if (i == n) break;
  }
  return found;
}

std::set<std::string> enumerated(const GraphHandle& g, std::size_t k, const RuleSet& rules) {
  const Plan probe(g, k, std::vector<DistrictIndex>(g->unit_count(), 0));
  const RuleTracker bounds(probe, rules);
  std::set<std::string> found;
  for_each_plan(*g, k, bounds.population_min(), bounds.population_max(), [&](std::span<const DistrictIndex> labels) {
    const Plan plan(g, k, {labels.begin(), labels.end()});
    const RuleTracker tracker(plan, rules);
    if (tracker.hard_rules_ok(plan)) found.insert(key_of(labels, k));
  });
  return found;
}

struct LimitCase {
  const char* name;
  void (*set)(RuleSet&);
};

const LimitCase kCases[] = {
    {"overall range", [](RuleSet& r) { r.population_range_max = 0.25; }},
    {"county splits", [](RuleSet& r) { r.county_splits_max = 1; }},
    {"county pieces", [](RuleSet& r) { r.county_pieces_max = 3; }},
    {"county districts", [](RuleSet& r) { r.county_districts_max = 2; }},
    {"town splits", [](RuleSet& r) { r.municipality_splits_max = 1; }},
    {"town pieces", [](RuleSet& r) { r.municipality_pieces_max = 4; }},
    {"town districts", [](RuleSet& r) { r.municipality_districts_max = 1; }},
    {"group at least", [](RuleSet& r) { r.group_share = {{0, 0.4, 0.0, 2, std::nullopt}}; }},
    {"group at most", [](RuleSet& r) { r.group_share = {{0, 0.3, 0.0, std::nullopt, 1}}; }},
    {"all at once",
     [](RuleSet& r) {
       r.population_range_max = 0.5;
       r.county_pieces_max = 4;
       r.municipality_districts_max = 2;
       r.group_share = {{0, 0.3, 0.0, 1, 2}};
     }},
};

class LimitEnumeration : public ::testing::TestWithParam<std::size_t> {};

TEST_P(LimitEnumeration, EnumeratedValidPlansEqualBruteForce) {
  const GraphHandle g = small_map();
  RuleSet none;
  none.population_tolerance = 0.4;
  const std::set<std::string> all = brute_force(*g, 3, none);
  ASSERT_EQ(enumerated(g, 3, none), all);
  RuleSet rules = none;
  kCases[GetParam()].set(rules);
  const std::set<std::string> want = brute_force(*g, 3, rules);
  EXPECT_EQ(enumerated(g, 3, rules), want) << kCases[GetParam()].name;
  // The rule bites: it keeps some plans and drops others, so the comparison can fail either way.
  EXPECT_GT(want.size(), 0u) << kCases[GetParam()].name;
  EXPECT_LT(want.size(), all.size()) << kCases[GetParam()].name;
}

INSTANTIATE_TEST_SUITE_P(EveryRule, LimitEnumeration, ::testing::Range<std::size_t>(0, std::size(kCases)));

TEST(RuleLimits, RandomMovesMatchRecomputation) {
  const GraphHandle g = small_map();
  Rng rng = make_stream(16, 3);
  for (const LimitCase& c : kCases) {
    RuleSet rules;
    rules.population_tolerance = 0.9;  // the walk wanders far; only the limits are judged here
    c.set(rules);
    Plan plan(g, 3, test::stripe_assignment(3, 4, 3));
    RuleTracker tracker(plan, rules);
    std::size_t ok = 0;
    for (int step = 0; step < 3000; ++step) {
      const UnitIndex u = uniform_below(rng, 12);
      tracker.move(plan, u, static_cast<DistrictIndex>(uniform_below(rng, 3)));
      const bool want = naive_limits_ok(*g, plan.assignment(), 3, rules);
      ASSERT_EQ(tracker.limits_ok(plan), want) << c.name << " at step " << step;
      ASSERT_EQ(tracker.population_spread(plan), naive_spread(plan)) << c.name << " at step " << step;
      ASSERT_EQ(tracker.limit_breaches(plan).empty(), want) << c.name;
      ok += want ? 1 : 0;
    }
    EXPECT_GT(ok, 0u) << c.name;
    EXPECT_LT(ok, 3000u) << c.name;
  }
}

TEST(RuleLimits, BreachesNameTheKeyAndTheAmount) {
  const GraphHandle g = small_map();
  // Stripes of columns {0}, {1, 2}, {3}: populations 6, 10, 8 (ideal 8); both counties split
  // (columns 0-1 and 2-3), 4 county pieces; town m0 meets districts 1 and 2, m1 meets 2 and 3;
  // group shares 6/6, 3/10, 1/8.
  const Plan plan(g, 3, {0, 1, 1, 2, 0, 1, 1, 2, 0, 1, 1, 2});
  RuleSet rules;
  rules.population_range_max = 0.25;  // ideal 8: at most 2 people apart, the plan has 4
  rules.county_pieces_max = 3;
  rules.municipality_districts_max = 1;
  rules.group_share = {{0, 0.3, 0.0, 3, std::nullopt}};
  const RuleTracker t(plan, rules);
  const auto breaches = t.limit_breaches(plan);
  std::vector<std::string> keys;
  for (const auto& b : breaches) keys.push_back(b.key);
  EXPECT_EQ(keys, (std::vector<std::string>{"rules.population_range_max", "rules.county_pieces_max",
                                            "rules.municipality_districts_max", "rules.group_share.at_least"}));
  EXPECT_NE(breaches[0].text.find("range 4 (50.00% of ideal)"), std::string::npos) << breaches[0].text;
  EXPECT_NE(breaches[1].text.find("4 county pieces, the limit is 3 (1 over)"), std::string::npos) << breaches[1].text;
  EXPECT_NE(breaches[2].text.find("m0 meets 2"), std::string::npos) << breaches[2].text;
  const std::string all = t.describe_violations(plan);
  for (const auto& b : breaches) EXPECT_NE(all.find(b.text), std::string::npos);
}

}  // namespace
}  // namespace planmill

namespace planmill {
namespace {

// A hard floor on districts at a group share reads the group column as surely as a weight does,
// so the manifest's rules_read_group_columns (run/observables.cpp) must say so for both.
TEST(RuleLimits, HardGroupTermsCountAsReadingGroupColumns) {
  RuleSet rules;
  EXPECT_FALSE(rules.reads_group_columns());
  rules.county_pieces_max = 3;
  rules.population_range_max = 0.1;
  EXPECT_FALSE(rules.reads_group_columns());
  EXPECT_FALSE(rules.has_soft_terms());
  rules.group_share = {{0, 0.5, 0.0, 1, std::nullopt}};
  EXPECT_TRUE(rules.reads_group_columns());
  EXPECT_FALSE(rules.has_soft_terms());
  rules.group_share[0].weight = 0.3;
  EXPECT_TRUE(rules.has_soft_terms());
}

}  // namespace
}  // namespace planmill
