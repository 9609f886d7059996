#pragma once
// The exact self-test: run a kernel on a small map, and compare the empirical law of the visited
// plans with the exact target computed by enumerating every valid plan.
//   merge-split: pi(P) ~ prod tau(P_i)^gamma * exp(-beta E(P));  flip: pi(P) ~ exp(-beta E(P)).
//   With frozen districts: the same laws restricted to the plans whose frozen districts are
//   those of the case's start plan.
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
  // Start plan (a label per unit), or empty for a random seed plan. Needed when the kernel has
  // frozen districts: the exact law is then over the plans that keep those districts as here.
  std::vector<DistrictIndex> start;
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

// Limits of the enumeration, checked before and while it runs: a map of more units than
// kSelftestMaxUnits is refused at once (the count of plans grows about exponentially in the
// units: the 6x6 grid into 6 has 451,206, the 7x7 into 7 about 1.6e8), and the enumeration stops
// with an error once it has found more than kSelftestMaxPlans valid plans (each one is held in
// memory and must be seen by the chain).
inline constexpr std::size_t kSelftestMaxUnits = 40;
inline constexpr std::size_t kSelftestMaxPlans = 2'000'000;

// Throws InputError (file = the case's name) when the map is beyond those limits.
[[nodiscard]] SelftestResult run_selftest(const SelftestCase& test);

// The built-in cases: grids and irregular graphs with unequal populations, every kernel, several
// (gamma, beta). `quick` keeps the run to a few seconds.
[[nodiscard]] std::vector<SelftestCase> builtin_selftest_cases(bool quick);

// Upper tail of the chi-square distribution with df degrees of freedom (regularised gamma Q).
[[nodiscard]] double chi_square_upper_tail(double statistic, double df);

}  // namespace planmill
