#pragma once
// Monte Carlo standard error of the mean: sd(x) / sqrt(ess_mean(x)) (posterior::mcse_mean).
#include "planmill/diagnose/draw_matrix.hpp"

namespace planmill::diagnose {

[[nodiscard]] Estimate mcse_mean(DrawMatrix x);

}  // namespace planmill::diagnose
