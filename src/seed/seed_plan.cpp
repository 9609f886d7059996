#include "planmill/seed/seed_plan.hpp"

#include <algorithm>
#include <numeric>
#include <sstream>

#include "planmill/base/error.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/spanning_tree.hpp"
#include "planmill/tree/tree_weights.hpp"

namespace planmill {
namespace {

struct Candidate {
  std::uint32_t child;
  bool child_is_district;  // else the side away from the child becomes the district
};

// Attempt a's tree weights: uniform trees unless the rules cap counties or municipalities (so a
// job without such caps draws the first plan it always drew); under caps, the first attempt is
// uniform and later ones favour edges inside counties and municipalities more and more, so that
// districts are cut along their lines and the caps can be met.
TreeWeights attempt_weights(const UnitGraph& graph, const RuleSet& rules, std::size_t attempt) {
  static constexpr double kFactor[] = {1.0, 4.0, 30.0, 300.0};
  const bool county_caps = rules.county_splits_max || rules.county_pieces_max || rules.county_districts_max;
  const bool town_caps =
      rules.municipality_splits_max || rules.municipality_pieces_max || rules.municipality_districts_max;
  const double f = county_caps || town_caps ? kFactor[attempt % 4] : 1.0;
  return {graph.has_counties() ? f : 1.0, graph.has_municipalities() ? f : 1.0};
}

// Counties (or municipalities) that keep units on both sides when `marks` (the district side when
// in_district) is cut off the region: how many the cut splits.
std::size_t codes_cut(const Region& region, const UnitCodes& codes, std::span<const std::uint8_t> marks,
                      bool in_district, std::vector<std::uint32_t>& inside, std::vector<std::uint32_t>& outside) {
  std::fill(inside.begin(), inside.end(), 0U);
  std::fill(outside.begin(), outside.end(), 0U);
  for (std::uint32_t i = 0; i < region.size(); ++i) {
    const std::uint32_t c = codes.code[region.global(i)];
    if (c == UnitCodes::kNone) continue;
    ++((marks[i] != 0) == in_district ? inside : outside)[c];
  }
  std::size_t cut = 0;
  for (std::size_t c = 0; c < inside.size(); ++c) cut += inside[c] > 0 && outside[c] > 0;
  return cut;
}

// Rank of a finished plan that breaks a hard rule: fewer broken rules first, then fewer county
// splits over the limit.
struct Miss {
  std::size_t rules = 0, excess = 0;
  std::string what;
  [[nodiscard]] bool better_than(const Miss& o) const { return rules != o.rules ? rules < o.rules : excess < o.excess; }
};

Miss describe_miss(const Plan& plan, const RuleTracker& tracker) {
  Miss m;
  m.what = tracker.describe_violations(plan);
  m.rules = 1;
  for (std::size_t at = m.what.find("; "); at != std::string::npos; at = m.what.find("; ", at + 2)) ++m.rules;
  const auto& limit = tracker.rules().county_splits_max;
  if (limit && tracker.county_splits() > *limit) m.excess = tracker.county_splits() - *limit;
  return m;
}

}  // namespace

Plan random_seed_plan(const GraphHandle& handle, std::size_t districts, const RuleSet& rules, Rng& rng,
                      const SeedEffort& effort) {
  const UnitGraph& graph = *handle;
  const std::size_t n = graph.unit_count();
  std::vector<DistrictIndex> label(n, 0);
  // The bounds come from a tracker on a trivial plan, so rounding matches the kernels exactly.
  const Plan probe(handle, districts, std::vector<DistrictIndex>(n, 0));
  const RuleTracker bounds(probe, rules);
  const std::int64_t lo = bounds.population_min(), hi = bounds.population_max();

  Region region;
  SpanningTreeSampler sampler;
  std::vector<UnitIndex> remaining(n), next;
  std::vector<std::uint8_t> side(n);
  std::vector<Candidate> candidates;
  std::vector<std::uint32_t> inside(graph.has_counties() ? graph.counties().names.size() : 0), outside(inside);
  std::size_t balanced_plans = 0;
  Miss closest;
  for (std::size_t attempt = 0; attempt < effort.restarts; ++attempt) {
    remaining.resize(n);  // a failed attempt may have left it holding only the unsplit rest
    std::iota(remaining.begin(), remaining.end(), UnitIndex{0});
    const TreeWeights weights = attempt_weights(graph, rules, attempt);
    region.set_weights(weights);
    bool failed = false;
    for (std::size_t m = districts; m >= 2 && !failed; --m) {
      region.build(graph, remaining);
      const std::int64_t total = region.total_population();
      const auto rest_lo = static_cast<std::int64_t>(m - 1) * lo, rest_hi = static_cast<std::int64_t>(m - 1) * hi;
      candidates.clear();
      for (std::size_t t = 0; t < effort.trees_per_split && candidates.empty(); ++t) {
        sampler.sample(region, rng);
        const auto sub = sampler.subtree_population();
        for (std::uint32_t v = 0; v < region.size(); ++v) {
          if (v == sampler.root()) continue;
          const std::int64_t s = sub[v], r = total - s;
          if (s >= lo && s <= hi && r >= rest_lo && r <= rest_hi) candidates.push_back({v, true});
          if (r >= lo && r <= hi && s >= rest_lo && s <= rest_hi) candidates.push_back({v, false});
        }
      }
      if (candidates.empty()) {
        failed = true;
        break;
      }
      const std::span<std::uint8_t> marks(side.data(), region.size());
      Candidate pick = candidates[uniform_below(rng, static_cast<std::uint32_t>(candidates.size()))];
      if (!weights.trivial() && graph.has_counties()) {
        // Of a few candidates, the one that cuts the fewest counties (a seed needs no stated law).
        sampler.mark_side(pick.child, marks);
        std::size_t fewest = codes_cut(region, graph.counties(), marks, pick.child_is_district, inside, outside);
        for (int tries = 0; tries < 8 && fewest > 0; ++tries) {
          const Candidate other = candidates[uniform_below(rng, static_cast<std::uint32_t>(candidates.size()))];
          sampler.mark_side(other.child, marks);
          const std::size_t cut = codes_cut(region, graph.counties(), marks, other.child_is_district, inside, outside);
          if (cut < fewest) {
            fewest = cut;
            pick = other;
          }
        }
      }
      sampler.mark_side(pick.child, marks);
      next.clear();
      const auto district = static_cast<DistrictIndex>(districts - m);
      for (std::uint32_t i = 0; i < region.size(); ++i) {
        const bool in_district = (marks[i] != 0) == pick.child_is_district;
        if (in_district) label[region.global(i)] = district;
        else next.push_back(region.global(i));
      }
      remaining.swap(next);
    }
    if (failed) continue;
    for (UnitIndex u : remaining) label[u] = static_cast<DistrictIndex>(districts - 1);
    Plan plan(handle, districts, label);
    const RuleTracker tracker(plan, rules);
    if (tracker.hard_rules_ok(plan)) return plan;
    // Every district is connected and within the population bounds: another hard rule failed.
    const Miss miss = describe_miss(plan, tracker);
    if (balanced_plans++ == 0 || miss.better_than(closest)) closest = miss;
  }
  std::ostringstream message;
  message << "no valid starting plan found for " << districts << " districts after " << effort.restarts
          << " attempts of up to " << effort.trees_per_split << " spanning trees per split: ";
  if (balanced_plans == 0) {
    message << "no attempt could cut every district within +/-" << 100.0 * rules.population_tolerance
            << "% of the ideal population; loosen rules.population_tolerance";
  } else {
    message << balanced_plans << " of them met the population band (+/-" << 100.0 * rules.population_tolerance
            << "%) but broke another hard rule; the closest: " << closest.what
            << "; loosen that rule";
  }
  message << ", or give a plan file as districts.start";
  throw InfeasibleError(message.str());
}

void check_seed_plan(const Plan& plan, const RuleSet& rules, const std::string& source) {
  const RuleTracker tracker(plan, rules);
  std::string problems;
  for (DistrictIndex d = 0; d < plan.district_count(); ++d)
    if (!plan.is_connected(d)) problems += " district " + std::to_string(d + 1) + " is not contiguous;";
  if (!tracker.hard_rules_ok(plan)) problems += " " + tracker.describe_violations(plan) + ";";
  if (!problems.empty())
    throw InfeasibleError(source + ": the starting plan breaks the rules:" + problems +
                          " fix the plan or loosen the rules in the job file");
}

}  // namespace planmill
