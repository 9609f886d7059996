#include "planmill/diagnose/observable_diagnostics.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "diagnose/steps.hpp"

namespace planmill::diagnose {
using namespace detail;

ObservableDiagnostics diagnose_observable(std::string name, DrawMatrix x) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  ObservableDiagnostics q{
      std::move(name), kNaN, kNaN, kNaN, kNaN, kNaN, kNaN, kNaN, kNaN, kNaN, kNaN, {}, false, false};
  if (x.shape_matches() && !x.values.empty() && x.chains > 0) {
    bool within = true;
    for (std::size_t c = 0; c < x.chains && within; ++c) {
      const auto chain = x.chain(c);
      within = std::all_of(chain.begin(), chain.end(), [&](double v) { return v == chain[0]; });
    }
    q.all_equal = within && std::all_of(x.values.begin(), x.values.end(),
                                        [&](double v) { return v == x.values[0]; });
    q.constant_within_chains = within && !q.all_equal && x.chains > 1;
  }
  auto note = [&q](const Estimate& e) {
    if (!e.ok() && q.note.empty()) q.note = std::string(e.reason);
    return e.value;
  };
  if (auto why = unusable_reason(x); !why.empty()) {
    q.note = std::string(why);
    if (x.shape_matches() && !x.values.empty()) {
      q.mean = pooled_mean(x.values);
      if (x.values.size() > 1) q.sd = pooled_sd(x.values);
    }
    return q;
  }
  q.mean = pooled_mean(x.values);
  q.sd = pooled_sd(x.values);

  // Matrices kept per thread and refilled for each observable: no fresh pages per call.
  struct Workspace {
    SortedDraws sorted;
    Matrix split, scores, indicator;
  };
  thread_local Workspace w;
  sort_draws(x, w.sorted);  // one sort serves every rank-based step
  split_chains(x, w.split);

  bulk_scores(w.sorted, w.scores);  // shared by bulk R-hat and bulk ESS
  const Estimate rhat_bulk = rhat_of(w.scores), ess_bulk = ess_of(w.scores);
  folded_scores(w.sorted, w.scores);
  q.rhat_bulk = note(rhat_bulk);
  q.rhat_folded = note(rhat_of(w.scores));
  q.rhat = std::isnan(q.rhat_bulk) || std::isnan(q.rhat_folded)
               ? kNaN
               : std::max(q.rhat_bulk, q.rhat_folded);
  q.ess_bulk = note(ess_bulk);

  indicator_at_quantile(w.split, w.sorted, 0.05, w.indicator);
  const Estimate ess_q05 = ess_of(w.indicator);
  indicator_at_quantile(w.split, w.sorted, 0.95, w.indicator);
  const Estimate ess_q95 = ess_of(w.indicator);
  q.ess_tail = note(!ess_q05.ok()                    ? ess_q05
                    : !ess_q95.ok()                  ? ess_q95
                    : ess_q05.value <= ess_q95.value ? ess_q05
                                                     : ess_q95);
  q.mcse_q05 = note(mcse_quantile_from(w.sorted, ess_q05, 0.05));
  q.mcse_q95 = note(mcse_quantile_from(w.sorted, ess_q95, 0.95));

  const Estimate ess_raw = ess_of(w.split);
  q.mcse_mean = note(ess_raw.ok() ? Estimate{q.sd / std::sqrt(ess_raw.value), {}} : ess_raw);
  return q;
}

}  // namespace planmill::diagnose
