#pragma once
// Effective sample size of the mean: ESS of the raw split chains (posterior::ess_mean), the
// one that mcse_mean uses.
#include "planmill/diagnose/draw_matrix.hpp"

namespace planmill::diagnose {

[[nodiscard]] Estimate ess_mean(DrawMatrix x);

}  // namespace planmill::diagnose
