#pragma once
// The thresholds of the verdict (verdict.hpp) and of the stopping rule (stopping_rule.hpp), with
// their defaults stated here only: the job's [verdict] section (job/), `planmill diagnose` and the
// manifest start from these. R-hat below 1.01 and bulk and tail ESS above 400 (100 per chain for
// 4 chains) are the marks Vehtari et al. (2021, Bayesian Analysis 16(2)) recommend; 200 records
// per chain is this project's own choice.
#include <cstddef>

namespace planmill::diagnose {

struct VerdictRule {
  double rhat_max = 1.01;
  double ess_min = 400.0;
  // Records per chain before a verdict can count (the stopping rule; judge() does not look at it).
  std::size_t min_records = 200;
};

}  // namespace planmill::diagnose
