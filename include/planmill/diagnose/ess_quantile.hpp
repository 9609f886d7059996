#pragma once
// Effective sample size of the prob-quantile: ESS of the split indicator chains I{x <= q_prob},
// q_prob the type-7 sample quantile of all draws (posterior::ess_quantile).
#include "planmill/diagnose/draw_matrix.hpp"

namespace planmill::diagnose {

[[nodiscard]] Estimate ess_quantile(DrawMatrix x, double prob);

}  // namespace planmill::diagnose
