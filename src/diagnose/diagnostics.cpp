// The single-purpose diagnostics, each composed of the visible steps in steps.hpp:
// check, split, (rank-normalise | fold | indicate), compute.
#include <algorithm>
#include <cmath>

#include "diagnose/steps.hpp"
#include "planmill/diagnose/ess_bulk.hpp"
#include "planmill/diagnose/ess_mean.hpp"
#include "planmill/diagnose/ess_quantile.hpp"
#include "planmill/diagnose/ess_tail.hpp"
#include "planmill/diagnose/mcse_mean.hpp"
#include "planmill/diagnose/mcse_quantile.hpp"
#include "planmill/diagnose/rhat.hpp"
#include "planmill/diagnose/rhat_bulk.hpp"
#include "planmill/diagnose/rhat_folded.hpp"

namespace planmill::diagnose {
using namespace detail;

namespace {
// The smaller of two estimates; NaN (with its reason) if either is NaN, as R's min() does.
Estimate smaller(Estimate a, Estimate b) {
  if (!a.ok()) return a;
  if (!b.ok()) return b;
  return a.value <= b.value ? a : b;
}
Estimate larger(Estimate a, Estimate b) {
  if (!a.ok()) return a;
  if (!b.ok()) return b;
  return a.value >= b.value ? a : b;
}
bool valid_prob(double p) { return p >= 0.0 && p <= 1.0; }
}  // namespace

Estimate rhat_bulk(DrawMatrix x) {
  if (auto why = unusable_reason(x); !why.empty()) return Estimate::nan(why);
  return rhat_of(bulk_scores(sort_draws(x)));
}

Estimate rhat_folded(DrawMatrix x) {
  if (auto why = unusable_reason(x); !why.empty()) return Estimate::nan(why);
  return rhat_of(folded_scores(sort_draws(x)));
}

Estimate rhat(DrawMatrix x) {
  if (auto why = unusable_reason(x); !why.empty()) return Estimate::nan(why);
  const SortedDraws sorted = sort_draws(x);
  return larger(rhat_of(bulk_scores(sorted)), rhat_of(folded_scores(sorted)));
}

Estimate ess_bulk(DrawMatrix x) {
  if (auto why = unusable_reason(x); !why.empty()) return Estimate::nan(why);
  return ess_of(bulk_scores(sort_draws(x)));
}

Estimate ess_mean(DrawMatrix x) {
  if (auto why = unusable_reason(x); !why.empty()) return Estimate::nan(why);
  return ess_of(split_chains(x));
}

Estimate ess_quantile(DrawMatrix x, double prob) {
  if (!valid_prob(prob)) return Estimate::nan("probability outside [0, 1]");
  if (auto why = unusable_reason(x); !why.empty()) return Estimate::nan(why);
  return ess_of(indicator_at_quantile(x, sort_draws(x), prob));
}

Estimate ess_tail(DrawMatrix x) {
  if (auto why = unusable_reason(x); !why.empty()) return Estimate::nan(why);
  const SortedDraws sorted = sort_draws(x);
  return smaller(ess_of(indicator_at_quantile(x, sorted, 0.05)),
                 ess_of(indicator_at_quantile(x, sorted, 0.95)));
}

Estimate mcse_mean(DrawMatrix x) {
  if (auto why = unusable_reason(x); !why.empty()) return Estimate::nan(why);
  const Estimate ess = ess_of(split_chains(x));
  if (!ess.ok()) return ess;
  return {pooled_sd(x.values) / std::sqrt(ess.value), {}};
}

Estimate mcse_quantile(DrawMatrix x, double prob) {
  if (!valid_prob(prob)) return Estimate::nan("probability outside [0, 1]");
  if (auto why = unusable_reason(x); !why.empty()) return Estimate::nan(why);
  const SortedDraws sorted = sort_draws(x);
  return mcse_quantile_from(sorted, ess_of(indicator_at_quantile(x, sorted, prob)), prob);
}

}  // namespace planmill::diagnose
