#include "planmill/diagnose/stopping_rule.hpp"

#include <vector>

#include "planmill/diagnose/observable_diagnostics.hpp"

namespace planmill::diagnose {
namespace {

std::string count_text(const Verdict& v) {
  return std::to_string(v.failures.size()) + " of " + std::to_string(v.table.size()) + " observables";
}

}  // namespace

std::string StopCheck::failed_part() const {
  if (!long_enough()) return "too short";
  if (!whole.pass) return "whole record";
  if (!later.pass) return "later half";
  return {};
}

std::string StopCheck::summary() const {
  const std::string half = "the later half (records " + std::to_string(later_first) + ".." +
                           (records > 0 ? std::to_string(records - 1) : std::string("none")) +
                           " of each chain)";
  if (!long_enough()) {
    return "too short: " + std::to_string(records) + " records per chain, the rule needs at least " +
           std::to_string(min_records) + " ([verdict] min_records)" +
           (whole.pass ? "" : "; the whole record also fails on " + count_text(whole));
  }
  if (!whole.pass) {
    return count_text(whole) + " fail on the whole record (" + std::to_string(records) +
           " records per chain)";
  }
  if (!later.pass) return count_text(later) + " fail on " + half + "; the whole record passes";
  return "passes on the whole record (" + std::to_string(records) + " records per chain) and on " + half;
}

StopCheck check_stop(std::span<const NamedDraws> observables, const VerdictRule& rule) {
  StopCheck s;
  s.min_records = rule.min_records;
  const std::size_t draws = observables.empty() ? 0 : observables.front().draws.draws;
  const std::size_t chains = observables.empty() ? 0 : observables.front().draws.chains;
  s.records = draws;
  s.later_first = draws / 2;
  const std::size_t half = draws - s.later_first;
  std::vector<ObservableDiagnostics> whole, later;
  whole.reserve(observables.size());
  later.reserve(observables.size());
  std::vector<double> buffer(half * chains);
  for (const NamedDraws& q : observables) {
    whole.push_back(diagnose_observable(std::string(q.name), q.draws));
    for (std::size_t c = 0; c < chains; ++c) {
      const auto chain = q.draws.chain(c).subspan(s.later_first);
      std::copy(chain.begin(), chain.end(), buffer.begin() + static_cast<std::ptrdiff_t>(c * half));
    }
    later.push_back(diagnose_observable(std::string(q.name), {buffer, half, chains}));
  }
  s.whole = judge(std::move(whole), rule);
  s.later = judge(std::move(later), rule);
  return s;
}

}  // namespace planmill::diagnose
