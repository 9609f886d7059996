#include "planmill/diagnose/quantity_diagnostics.hpp"

#include <cmath>
#include <limits>

#include "diagnose/steps.hpp"

namespace planmill::diagnose {
using namespace detail;

QuantityDiagnostics diagnose_quantity(std::string name, DrawMatrix x) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  QuantityDiagnostics q{std::move(name), kNaN, kNaN, kNaN, kNaN, kNaN, kNaN, kNaN, kNaN,
                        kNaN, kNaN, {}};
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

  const SortedDraws sorted = sort_draws(x);  // one sort serves every rank-based step
  const Matrix bulk = bulk_scores(sorted);  // shared by bulk R-hat and bulk ESS
  q.rhat_bulk = note(rhat_of(bulk));
  q.rhat_folded = note(rhat_of(folded_scores(sorted)));
  q.rhat = std::isnan(q.rhat_bulk) || std::isnan(q.rhat_folded)
               ? kNaN
               : std::max(q.rhat_bulk, q.rhat_folded);
  q.ess_bulk = note(ess_of(bulk));

  const Estimate ess_q05 = ess_of(indicator_at_quantile(x, sorted, 0.05));
  const Estimate ess_q95 = ess_of(indicator_at_quantile(x, sorted, 0.95));
  q.ess_tail = note(!ess_q05.ok() ? ess_q05 : !ess_q95.ok() ? ess_q95
                    : ess_q05.value <= ess_q95.value       ? ess_q05
                                                           : ess_q95);
  q.mcse_q05 = note(mcse_quantile_from(sorted, ess_q05, 0.05));
  q.mcse_q95 = note(mcse_quantile_from(sorted, ess_q95, 0.95));

  const Estimate ess_raw = ess_of(split_chains(x));
  q.mcse_mean = note(ess_raw.ok() ? Estimate{q.sd / std::sqrt(ess_raw.value), {}} : ess_raw);
  return q;
}

}  // namespace planmill::diagnose
