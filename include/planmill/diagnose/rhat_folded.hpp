#pragma once
// Folded split R-hat: the bulk R-hat of |x - median(x)|, sensitive to chains that differ in
// scale rather than location (Vehtari et al. 2021). Equals posterior::rhat's folded part.
#include "planmill/diagnose/draw_matrix.hpp"

namespace planmill::diagnose {

[[nodiscard]] Estimate rhat_folded(DrawMatrix x);

}  // namespace planmill::diagnose
