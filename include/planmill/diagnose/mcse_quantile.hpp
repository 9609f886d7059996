#pragma once
// Monte Carlo standard error of the prob-quantile, as posterior::mcse_quantile defines it: half
// the distance between the order statistics at the Beta(ess*p + 1, ess*(1-p) + 1) quantiles
// 0.1586553 and 0.8413447 (a +-1 sd interval), ess = ess_quantile(x, prob).
#include "planmill/diagnose/draw_matrix.hpp"

namespace planmill::diagnose {

[[nodiscard]] Estimate mcse_quantile(DrawMatrix x, double prob);

}  // namespace planmill::diagnose
