#pragma once
// The exact self-test: run a kernel on a small map, and compare the empirical law of the visited
// plans with the exact target computed by enumerating every valid plan.
//   merge-split: pi(P) ~ prod tau(P_i)^gamma * exp(-beta E(P));  flip: pi(P) ~ exp(-beta E(P)).
//   recombination: no closed-form law, so: every visited plan is valid and every valid plan is
//   reached.
#include <memory>
#include <string>
#include <vector>

#include "planmill/chain/chain.hpp"

namespace planmill {

struct SelftestCase {
  std::string name;
  GraphHandle graph;
  std::size_t districts = 2;
  RuleSet rules;
  KernelSettings kernel;
  std::uint64_t samples = 20000;  // recorded plans
  // Steps between recorded plans; 0 = chosen from a pilot run so that about kAcceptedPerRecord
  // proposals are accepted between records (recorded plans then nearly independent).
  std::uint64_t thin = 0;
  std::uint64_t seed = 1;
};

struct PlanFrequency {
  std::string plan;  // canonical labels, one character per unit ('a' + district)
  double exact = 0;  // target probability (0 for recombination)
  std::uint64_t seen = 0;
};

struct SelftestResult {
  std::string name;
  std::string kernel;
  std::size_t valid_plans = 0;
  std::uint64_t samples = 0;
  std::size_t plans_visited = 0;
  bool all_valid = true;
  double total_variation = 0;  // NaN for recombination
  double chi_square = 0;
  std::size_t degrees_of_freedom = 0;
  double p_value = 1;
  double acceptance = 0;
  std::uint64_t thin = 0;
  bool passed = false;
  std::string note;
  std::vector<PlanFrequency> plans;
};

// Pass thresholds: p-value above this, and (for recombination) every valid plan visited.
inline constexpr double kSelftestMinPValue = 1e-4;
inline constexpr double kAcceptedPerRecord = 25.0;

[[nodiscard]] SelftestResult run_selftest(const SelftestCase& test);

// The built-in cases: grids and irregular graphs with unequal populations, every kernel, several
// (gamma, beta). `quick` keeps the run to a few seconds.
[[nodiscard]] std::vector<SelftestCase> builtin_selftest_cases(bool quick);

// Upper tail of the chi-square distribution with df degrees of freedom (regularised gamma Q).
[[nodiscard]] double chi_square_upper_tail(double statistic, double df);

}  // namespace planmill
