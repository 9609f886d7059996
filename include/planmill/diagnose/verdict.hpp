#pragma once
// The pass/fail verdict over a table of quantities: pass only if every quantity has R-hat below
// rhat_max and both bulk and tail ESS above ess_min (Vehtari et al. 2021 recommend 1.01 and
// 400 = 100 per chain for 4 chains). A NaN diagnostic fails: it cannot show convergence.
#include <string>
#include <vector>

#include "planmill/diagnose/quantity_diagnostics.hpp"

namespace planmill::diagnose {

struct VerdictRule {
  double rhat_max = 1.01;
  double ess_min = 400.0;
};

struct Failure {
  std::string name;
  std::string problem;     // e.g. "R-hat 1.052 >= 1.01; tail ESS 120 <= 400"
  std::string suggestion;  // what to change in the run
};

struct Verdict {
  bool pass = false;
  std::vector<QuantityDiagnostics> table;  // worst first
  std::vector<Failure> failures;           // in table order
};

// How far a quantity is from passing: > 1 fails, <= 1 passes; +inf when a diagnostic is NaN.
[[nodiscard]] double severity(const QuantityDiagnostics& q, const VerdictRule& rule);

[[nodiscard]] Verdict judge(std::vector<QuantityDiagnostics> table, const VerdictRule& rule = {});

}  // namespace planmill::diagnose
