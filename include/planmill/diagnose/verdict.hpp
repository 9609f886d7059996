#pragma once
// The pass/fail verdict over a table of quantities: pass only if every quantity has R-hat below
// rhat_max and both bulk and tail ESS above ess_min (Vehtari et al. 2021 recommend 1.01 and
// 400 = 100 per chain for 4 chains). A NaN diagnostic fails: it cannot show convergence, with two
// exceptions that carry no evidence either way and are listed apart:
//  - a quantity exactly equal (==, no tolerance) in every draw of every chain (e.g. county splits
//    under a zero limit) is not judged; a verdict with no judged quantity fails. A quantity
//    constant within each chain but different between chains fails: its chains never mixed;
//  - a discrete quantity whose 5% or 95% quantile is its smallest or largest value has no tail ESS
//    (the quantile indicator is constant); it is judged on R-hat and bulk ESS alone.
#include <cstddef>
#include <string>
#include <vector>

#include "planmill/diagnose/quantity_diagnostics.hpp"

namespace planmill::diagnose {

struct VerdictRule {
  double rhat_max = 1.01;
  double ess_min = 400.0;
  // Records per chain before a verdict can count (the stopping rule, stopping_rule.hpp; judge()
  // itself does not look at it).
  std::size_t min_records = 200;
};

struct Failure {
  std::string name;
  std::string problem;     // e.g. "R-hat 1.052 >= 1.01; tail ESS 120 <= 400"
  std::string suggestion;  // what to change in the run
};

struct Remark {
  std::string name;
  std::string what;  // why it was not judged, or judged without tail ESS
};

struct Verdict {
  bool pass = false;
  std::vector<QuantityDiagnostics> table;  // worst first
  std::vector<Failure> failures;           // in table order
  std::vector<Remark> remarks;             // quantities not judged, or judged in part
};

// Equal in every draw: nothing to judge.
[[nodiscard]] bool is_constant(const QuantityDiagnostics& q);
// Tail ESS undefined while R-hat and bulk ESS are numbers (a discrete quantity at an extreme).
[[nodiscard]] bool lacks_tail_only(const QuantityDiagnostics& q);

// How far a quantity is from passing: > 1 fails, <= 1 passes; +inf when a diagnostic is NaN.
[[nodiscard]] double severity(const QuantityDiagnostics& q, const VerdictRule& rule);

[[nodiscard]] Verdict judge(std::vector<QuantityDiagnostics> table, const VerdictRule& rule = {});

}  // namespace planmill::diagnose
