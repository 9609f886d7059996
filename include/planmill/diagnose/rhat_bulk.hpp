#pragma once
// Rank-normalised split R-hat (Vehtari et al. 2021, Bayesian Analysis 16(2)): R-hat of the
// pooled normal scores of the split chains. Equals posterior::rhat's bulk part.
#include "planmill/diagnose/draw_matrix.hpp"

namespace planmill::diagnose {

[[nodiscard]] Estimate rhat_bulk(DrawMatrix x);

}  // namespace planmill::diagnose
