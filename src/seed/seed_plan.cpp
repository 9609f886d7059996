#include "planmill/seed/seed_plan.hpp"

#include <numeric>
#include <sstream>

#include "planmill/base/error.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/spanning_tree.hpp"

namespace planmill {
namespace {

struct Candidate {
  std::uint32_t child;
  bool child_is_district;  // else the side away from the child becomes the district
};

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
  for (std::size_t attempt = 0; attempt < effort.restarts; ++attempt) {
    remaining.resize(n);  // a failed attempt may have left it holding only the unsplit rest
    std::iota(remaining.begin(), remaining.end(), UnitIndex{0});
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
      const Candidate pick = candidates[uniform_below(rng, static_cast<std::uint32_t>(candidates.size()))];
      const std::span<std::uint8_t> marks(side.data(), region.size());
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
  }
  std::ostringstream message;
  message << "no valid starting plan found for " << districts << " districts within +/-"
          << 100.0 * rules.population_tolerance << "% after " << effort.restarts << " attempts of up to "
          << effort.trees_per_split << " spanning trees per split; loosen rules.population_tolerance or "
          << "county_splits_max, or give a plan file as districts.start";
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
