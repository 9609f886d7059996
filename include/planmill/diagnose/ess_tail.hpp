#pragma once
// Tail effective sample size: the smaller of ess_quantile at 0.05 and 0.95 (posterior::ess_tail).
#include "planmill/diagnose/draw_matrix.hpp"

namespace planmill::diagnose {

[[nodiscard]] Estimate ess_tail(DrawMatrix x);

}  // namespace planmill::diagnose
