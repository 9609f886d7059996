#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>
#include <unordered_map>

#include "planmill/base/error.hpp"
#include "planmill/enumerate/enumerate.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/selftest/selftest.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/tree_count.hpp"

namespace planmill {
namespace {

// Labels renumbered by first appearance, one character per unit: the same key for every labelling
// of one partition.
void canonical_key(std::span<const DistrictIndex> labels, std::vector<DistrictIndex>& map, std::string& key) {
  map.assign(map.size(), kNoDistrict);
  key.resize(labels.size());
  DistrictIndex next = 0;
  for (std::size_t u = 0; u < labels.size(); ++u) {
    DistrictIndex& m = map[labels[u]];
    if (m == kNoDistrict) m = next++;
    key[u] = static_cast<char>('a' + m);
  }
}

double log_target(const Plan& plan, const RuleTracker& rules, const KernelSettings& kernel, TreeCounter& counter,
                  Region& region) {
  // Region carries the kernel's tree weights (set once in run_selftest), so tau is tau_w.
  double log_weight = 0.0;
  if (kernel.kind == KernelKind::merge_split && kernel.gamma != 0.0)
    for (DistrictIndex d = 0; d < plan.district_count(); ++d) {
      region.build(plan, d, d);
      log_weight += kernel.gamma * counter.log_count(region);
    }
  return log_weight - kernel.beta * rules.energy(plan);
}

// A random seed plan; if bisection finds none within its effort (tight bounds on odd maps), an
// enumerated valid plan, so that the self-test always runs when valid plans exist.
Plan start_plan(const GraphHandle& graph, std::size_t k, const RuleSet& rules, Rng& rng, const std::string& fallback) {
  try {
    return random_seed_plan(graph, k, rules, rng, {50, 5});
  } catch (const InfeasibleError&) {
    std::vector<DistrictIndex> labels;
    for (char ch : fallback) labels.push_back(static_cast<DistrictIndex>(ch - 'a'));
    return Plan(graph, k, std::move(labels));
  }
}

// True when every frozen district of `start` is a district of `labels`, unit for unit.
bool keeps_frozen(std::span<const DistrictIndex> labels, const SelftestCase& test) {
  for (DistrictIndex d = 0; d < test.kernel.frozen.size(); ++d) {
    if (!test.kernel.frozen[d]) continue;
    DistrictIndex as = kNoDistrict;
    std::size_t inside = 0, labelled = 0;
    for (std::size_t u = 0; u < labels.size(); ++u) {
      if (test.start[u] != d) continue;
      if (as == kNoDistrict) as = labels[u];
      if (labels[u] != as) return false;
      ++inside;
    }
    for (const DistrictIndex l : labels) labelled += l == as;
    if (labelled != inside) return false;
  }
  return true;
}

}  // namespace

SelftestResult run_selftest(const SelftestCase& test) {
  const UnitGraph& graph = *test.graph;
  const std::size_t k = test.districts;
  if (!test.kernel.frozen.empty() && test.start.size() != graph.unit_count())
    throw std::invalid_argument("run_selftest: frozen districts need a start plan of every unit");
  SelftestResult result;
  result.name = test.name;
  result.kernel = kernel_name(test.kernel.kind);

  if (graph.unit_count() > kSelftestMaxUnits)
    throw InputError({test.name, 0, ""},
                     "the map has " + std::to_string(graph.unit_count()) +
                         " units, too many to enumerate every plan (selftest takes at most " +
                         std::to_string(kSelftestMaxUnits) + " units)",
                     "run selftest on a small map (a few dozen units), or without a job for the built-in cases");

  // 1. Every valid plan and its exact target probability.
  const Plan probe(test.graph, k, std::vector<DistrictIndex>(graph.unit_count(), 0));
  const RuleTracker bounds(probe, test.rules);
  std::unordered_map<std::string, std::size_t> index;
  std::vector<double> log_weights;
  std::vector<DistrictIndex> relabel(k);
  std::string key;
  TreeCounter counter;
  Region region;
  region.set_weights({test.kernel.county_tree_weight, test.kernel.municipality_tree_weight});
  for_each_plan(graph, k, bounds.population_min(), bounds.population_max(), [&](std::span<const DistrictIndex> labels) {
    Plan plan(test.graph, k, std::vector<DistrictIndex>(labels.begin(), labels.end()));
    const RuleTracker rules(plan, test.rules);
    if (!rules.hard_rules_ok(plan) || !keeps_frozen(labels, test)) return;
    if (log_weights.size() == kSelftestMaxPlans)
      throw InputError({test.name, 0, ""},
                       "more than " + std::to_string(kSelftestMaxPlans) +
                           " valid plans, too many to enumerate (selftest takes at most " +
                           std::to_string(kSelftestMaxPlans) + ")",
                       "use a smaller map, fewer districts or a tighter population_tolerance");
    canonical_key(labels, relabel, key);
    index.emplace(key, log_weights.size());
    result.plans.push_back({key, 0.0, 0});
    log_weights.push_back(log_target(plan, rules, test.kernel, counter, region));
  });
  result.valid_plans = log_weights.size();
  if (result.valid_plans == 0) {
    result.note = "no valid plan exists for these rules";
    return result;
  }
  double top = -std::numeric_limits<double>::infinity();
  for (double w : log_weights) top = std::max(top, w);
  double z = 0.0;
  for (double w : log_weights) z += std::exp(w - top);
  for (std::size_t i = 0; i < log_weights.size(); ++i) result.plans[i].exact = std::exp(log_weights[i] - top) / z;

  // 2. The chain, from a random valid seed, with a burn-in of 100 recording intervals (the pilot
  // run that picks the interval is part of the burn-in).
  Rng seed_rng = make_stream(test.seed, 1'000'003);
  ChainSetup setup{test.graph, test.rules, test.kernel, test.seed, 0};
  Chain chain(setup, test.start.empty() ? start_plan(test.graph, k, test.rules, seed_rng, result.plans.front().plan)
                                       : Plan(test.graph, k, test.start));
  std::uint64_t thin = test.thin;
  if (thin == 0) {
    constexpr std::uint64_t pilot = 20000;
    for (std::uint64_t s = 0; s < pilot; ++s) chain.step();
    const double accepted = std::max(1.0, static_cast<double>(chain.counters().outcomes[0]));
    thin = std::clamp<std::uint64_t>(static_cast<std::uint64_t>(std::ceil(kAcceptedPerRecord * pilot / accepted)), 1,
                                     100000);
  }
  result.thin = thin;
  for (std::uint64_t s = 0; s < 100 * thin; ++s) chain.step();
  std::uint64_t invalid = 0;
  for (std::uint64_t n = 0; n < test.samples; ++n) {
    for (std::uint64_t s = 0; s < thin; ++s) chain.step();
    canonical_key(chain.state().plan.assignment(), relabel, key);
    const auto it = index.find(key);
    if (it == index.end()) ++invalid;
    else ++result.plans[it->second].seen;
  }
  result.samples = test.samples;
  result.all_valid = invalid == 0;
  result.acceptance = chain.counters().acceptance();
  for (const auto& p : result.plans) result.plans_visited += p.seen > 0;

  if (test.kernel.kind == KernelKind::recombination) {
    result.total_variation = result.chi_square = std::numeric_limits<double>::quiet_NaN();
    result.passed = result.all_valid && result.plans_visited == result.valid_plans;
    result.note = "stationary law not known in closed form: checks validity and reach only";
    if (!result.all_valid) result.note = std::to_string(invalid) + " recorded plans broke a rule";
    else if (!result.passed)
      result.note = "reached " + std::to_string(result.plans_visited) + " of " + std::to_string(result.valid_plans) +
                    " valid plans; run longer";
    return result;
  }

  // 3. Total variation and a chi-square test; plans with expected count below 5 share one bin.
  const auto total = static_cast<double>(test.samples);
  double tv = 0.0, chi = 0.0, pooled_expected = 0.0, pooled_seen = 0.0;
  std::size_t bins = 0;
  for (const auto& p : result.plans) {
    const double expected = p.exact * total, seen = static_cast<double>(p.seen);
    tv += std::abs(seen / total - p.exact);
    if (expected < 5.0) {
      pooled_expected += expected;
      pooled_seen += seen;
      continue;
    }
    chi += (seen - expected) * (seen - expected) / expected;
    ++bins;
  }
  if (pooled_expected > 0.0) {
    chi += (pooled_seen - pooled_expected) * (pooled_seen - pooled_expected) / pooled_expected;
    ++bins;
  }
  result.total_variation = tv / 2.0;
  result.chi_square = chi;
  result.degrees_of_freedom = bins > 1 ? bins - 1 : 0;
  result.p_value = result.degrees_of_freedom > 0 ? chi_square_upper_tail(chi, static_cast<double>(bins - 1)) : 1.0;
  result.passed = result.all_valid && result.p_value >= kSelftestMinPValue;
  if (!result.all_valid) result.note = std::to_string(invalid) + " recorded plans broke a rule";
  return result;
}

}  // namespace planmill
