#include "planmill/diagnose/verdict.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>

namespace planmill::diagnose {
namespace {

std::string number(double v, const char* format) {
  if (std::isnan(v)) return "NaN";
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, format, v);
  return buffer;
}

}  // namespace

// Exact equality of the draws themselves (never sd == 0, which tiny varying values underflow to).
bool is_constant(const ObservableDiagnostics& q) { return q.all_equal; }

bool lacks_tail_only(const ObservableDiagnostics& q) {
  return !is_constant(q) && !q.constant_within_chains && std::isnan(q.ess_tail) && !std::isnan(q.rhat) && !std::isnan(q.ess_bulk);
}

double severity(const ObservableDiagnostics& q, const VerdictRule& rule) {
  if (is_constant(q)) return 0.0;
  const double tail = lacks_tail_only(q) ? q.ess_bulk : q.ess_tail;
  if (std::isnan(q.rhat) || std::isnan(q.ess_bulk) || std::isnan(tail)) {
    return std::numeric_limits<double>::infinity();
  }
  // Each ratio is 1 exactly at its threshold; an observable is as bad as its worst ratio.
  const double by_rhat = (q.rhat - 1.0) / (rule.rhat_max - 1.0);
  const double by_ess = rule.ess_min / std::max(std::min(q.ess_bulk, tail), 1e-300);
  return std::max(by_rhat, by_ess);
}

std::string_view judged_as(const Verdict& verdict, const ObservableDiagnostics& q) {
  if (is_constant(q)) return "not judged";
  const bool failed = std::any_of(verdict.failures.begin(), verdict.failures.end(),
                                  [&](const Failure& f) { return f.name == q.name; });
  return failed ? "fail" : "pass";
}

Verdict judge(std::vector<ObservableDiagnostics> table, const VerdictRule& rule) {
  std::stable_sort(table.begin(), table.end(), [&](const auto& a, const auto& b) {
    return severity(a, rule) > severity(b, rule);
  });
  Verdict verdict;
  std::size_t judged = 0;
  for (const auto& q : table) {
    if (is_constant(q)) {
      verdict.remarks.push_back({q.name, "not judged: equal in every draw of every chain"});
      continue;
    }
    ++judged;
    const bool no_tail = lacks_tail_only(q);
    if (no_tail) {
      verdict.remarks.push_back({q.name, "judged on R-hat and bulk ESS only: a discrete observable "
                                         "whose 5% or 95% quantile is an extreme value has no "
                                         "tail ESS"});
    }
    const bool rhat_bad = !(q.rhat < rule.rhat_max);
    const bool bulk_bad = !(q.ess_bulk > rule.ess_min);
    const bool tail_bad = !no_tail && !(q.ess_tail > rule.ess_min);
    if (!rhat_bad && !bulk_bad && !tail_bad) continue;
    Failure f{q.name, {}, {}};
    auto add = [&f](const std::string& part) { f.problem += (f.problem.empty() ? "" : "; ") + part; };
    if (rhat_bad) add("R-hat " + number(q.rhat, "%.4f") + " >= " + number(rule.rhat_max, "%g"));
    if (bulk_bad) add("bulk ESS " + number(q.ess_bulk, "%.0f") + " <= " + number(rule.ess_min, "%g"));
    if (tail_bad) add("tail ESS " + number(q.ess_tail, "%.0f") + " <= " + number(rule.ess_min, "%g"));
    if (q.constant_within_chains) {
      add("equal in every draw of each chain but different between chains: the chains have not "
          "mixed at all");
    } else if (!q.note.empty()) {
      add(q.note);
    }

    if (q.constant_within_chains) {
      f.suggestion = "each chain is stuck at its own value: run more steps; if chains stay put, "
                     "use tempering or a kernel that changes this observable, or start more chains "
                     "from dispersed plans";
    } else if (std::isnan(q.rhat) || std::isnan(q.ess_bulk) || (!no_tail && std::isnan(q.ess_tail))) {
      f.suggestion = "check the traces of this observable (constant, non-finite or too short); "
                     "leave out observables that cannot vary";
    } else if (rhat_bad) {
      f.suggestion = "chains disagree: run more steps; if chains stay in different regions, "
                     "use tempering (a tempered run: more rungs or a hotter top rung) or start "
                     "more chains from dispersed plans";
    } else {
      // ESS grows about linearly in steps and in chains once the chains have mixed.
      const double factor = rule.ess_min / std::min(q.ess_bulk, no_tail ? q.ess_bulk : q.ess_tail);
      f.suggestion = "run about " + number(std::ceil(factor * 10.0) / 10.0, "%.1f") +
                     "x more steps or more chains";
    }
    verdict.failures.push_back(std::move(f));
  }
  verdict.pass = verdict.failures.empty() && judged > 0;
  verdict.table = std::move(table);
  return verdict;
}

}  // namespace planmill::diagnose
