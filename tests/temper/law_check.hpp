#pragma once
// Runs a ladder on a small map and compares the law of the plans on its target rung with the
// exact target law, found by enumerating every valid plan (run_selftest with one sample computes
// exactly that table). Same statistics and thresholds as the self-test: chi-square with bins of
// expected count < 5 pooled, p >= kSelftestMinPValue, and the total variation distance.
#include <algorithm>
#include <cmath>
#include <numbers>
#include <string>
#include <unordered_map>
#include <vector>

#include "planmill/selftest/selftest.hpp"
#include "planmill/temper/ladder.hpp"

namespace planmill::test {

struct LadderLawCase {
  std::shared_ptr<const UnitGraph> graph;
  std::size_t districts = 2;
  RuleSet rules;
  KernelSettings kernel;  // kernel.beta is ignored; the target is betas[0]
  std::vector<double> betas;
  std::uint64_t swap_every = 5;
  bool wrong_swap_sign = false;
  bool tune = false;  // tune the ladder during the burn-in
  std::uint64_t samples = 10000;
  std::uint64_t thin = 0;  // ladder steps between records; 0 = about 25 accepted target moves
  std::uint64_t seed = 11;
};

struct LadderLawResult {
  std::size_t valid_plans = 0;
  double total_variation = 0;
  double noise_total_variation = 0;  // expected TV of independent draws from the exact law
  double p_value = 0;
  std::uint64_t thin = 0;
  double lowest_pair_acceptance = 1;
  std::uint64_t invalid = 0;
};

inline std::string canonical(std::span<const DistrictIndex> labels, std::size_t k) {
  std::vector<DistrictIndex> map(k, kNoDistrict);
  std::string key(labels.size(), 'a');
  DistrictIndex next = 0;
  for (std::size_t u = 0; u < labels.size(); ++u) {
    DistrictIndex& m = map[labels[u]];
    if (m == kNoDistrict) m = next++;
    key[u] = static_cast<char>('a' + m);
  }
  return key;
}

inline LadderLawResult check_ladder_law(const LadderLawCase& c) {
  // 1. The exact law at the target beta (the enumeration is exact).
  SelftestCase exact;
  exact.graph = c.graph;
  exact.districts = c.districts;
  exact.rules = c.rules;
  exact.kernel = c.kernel;
  exact.kernel.beta = c.betas.front();
  exact.samples = 1;
  exact.thin = 1;
  const SelftestResult table = run_selftest(exact);
  LadderLawResult result;
  result.valid_plans = table.valid_plans;
  std::unordered_map<std::string, std::size_t> index;
  for (std::size_t i = 0; i < table.plans.size(); ++i) index.emplace(table.plans[i].plan, i);

  // 2. Thinning: about 25 accepted moves of a lone chain at the target beta per record.
  std::vector<DistrictIndex> start;
  for (char ch : table.plans.front().plan) start.push_back(static_cast<DistrictIndex>(ch - 'a'));
  const Plan start_plan(c.graph, c.districts, start);
  std::uint64_t thin = c.thin;
  if (thin == 0) {
    ChainSetup pilot_setup{c.graph, c.rules, exact.kernel, c.seed + 1000, 0};
    Chain pilot(pilot_setup, start_plan);
    constexpr std::uint64_t pilot_steps = 20000;
    for (std::uint64_t s = 0; s < pilot_steps; ++s) pilot.step();
    const double accepted = std::max(1.0, static_cast<double>(pilot.counters().outcomes[0]));
    thin = static_cast<std::uint64_t>(std::ceil(kAcceptedPerRecord * pilot_steps / accepted));
  }
  result.thin = thin;

  // 3. The ladder, recorded on its target rung after a burn-in of 100 recording intervals.
  LadderSetup setup;
  setup.chain = ChainSetup{c.graph, c.rules, c.kernel, c.seed, 0};
  setup.betas = c.betas;
  setup.swap_every = c.swap_every;
  setup.wrong_swap_sign = c.wrong_swap_sign;
  Ladder ladder(setup, {start_plan});
  if (c.tune)
    ladder.tune(100 * thin);
  else
    ladder.run(100 * thin);
  std::vector<std::uint64_t> seen(table.plans.size(), 0);
  for (std::uint64_t n = 0; n < c.samples; ++n) {
    ladder.run(thin);
    const auto it = index.find(canonical(ladder.on_rung(0).state().plan.assignment(), c.districts));
    if (it == index.end())
      ++result.invalid;
    else
      ++seen[it->second];
  }
  for (std::size_t r = 0; r + 1 < ladder.rungs(); ++r)
    result.lowest_pair_acceptance =
        std::min(result.lowest_pair_acceptance, ladder.statistics().swap_acceptance(r));

  // 4. Chi-square (pooling expected counts below 5) and total variation.
  const auto total = static_cast<double>(c.samples);
  double tv = 0, noise = 0, chi = 0, pooled_expected = 0, pooled_seen = 0;
  std::size_t bins = 0;
  for (std::size_t i = 0; i < seen.size(); ++i) {
    const double p = table.plans[i].exact, expected = p * total, got = static_cast<double>(seen[i]);
    tv += std::abs(got / total - p);
    // E|X/n - p| ~ sqrt(2/pi) sd for a binomial count (normal approximation).
    noise += std::sqrt(2.0 / std::numbers::pi * p * (1.0 - p) / total);
    if (expected < 5.0) {
      pooled_expected += expected;
      pooled_seen += got;
      continue;
    }
    chi += (got - expected) * (got - expected) / expected;
    ++bins;
  }
  if (pooled_expected > 0.0) {
    chi += (pooled_seen - pooled_expected) * (pooled_seen - pooled_expected) / pooled_expected;
    ++bins;
  }
  result.total_variation = tv / 2.0;
  result.noise_total_variation = noise / 2.0;
  result.p_value = bins > 1 ? chi_square_upper_tail(chi, static_cast<double>(bins - 1)) : 1.0;
  return result;
}

}  // namespace planmill::test
