#pragma once
// The pass/fail verdict over a table of observables: pass only if every observable has R-hat below
// rhat_max and both bulk and tail ESS above ess_min (the thresholds and their defaults:
// verdict_rule.hpp). A NaN diagnostic fails: it cannot show convergence, with two
// exceptions that carry no evidence either way and are listed apart:
//  - an observable exactly equal (==, no tolerance) in every draw of every chain (e.g. county splits
//    under a zero limit) is not judged; a verdict with no judged observable fails. An observable
//    constant within each chain but different between chains fails: its chains never mixed;
//  - a discrete observable whose 5% or 95% quantile is its smallest or largest value has no tail ESS
//    (the quantile indicator is constant); it is judged on R-hat and bulk ESS alone.
#include <cstddef>
#include <string>
#include <string_view>
#include <vector>

#include "planmill/diagnose/observable_diagnostics.hpp"
#include "planmill/diagnose/verdict_rule.hpp"

namespace planmill::diagnose {

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
  std::vector<ObservableDiagnostics> table;  // worst first
  std::vector<Failure> failures;             // in table order
  std::vector<Remark> remarks;               // observables not judged, or judged in part
};

// Equal in every draw: nothing to judge.
[[nodiscard]] bool is_constant(const ObservableDiagnostics& q);
// Tail ESS undefined while R-hat and bulk ESS are numbers (a discrete observable at an extreme).
[[nodiscard]] bool lacks_tail_only(const ObservableDiagnostics& q);

// How far an observable is from passing: > 1 fails, <= 1 passes; +inf when a diagnostic is NaN.
[[nodiscard]] double severity(const ObservableDiagnostics& q, const VerdictRule& rule);

// How the verdict took one of its table's observables: "pass", "fail" or "not judged".
[[nodiscard]] std::string_view judged_as(const Verdict& verdict, const ObservableDiagnostics& q);

[[nodiscard]] Verdict judge(std::vector<ObservableDiagnostics> table, const VerdictRule& rule = {});

}  // namespace planmill::diagnose
