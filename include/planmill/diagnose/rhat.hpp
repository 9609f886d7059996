#pragma once
// R-hat as Vehtari et al. (2021) recommend and posterior::rhat computes: the larger of the
// bulk and folded rank-normalised split R-hat. Values below 1.01 are the usual pass mark.
#include "planmill/diagnose/draw_matrix.hpp"

namespace planmill::diagnose {

[[nodiscard]] Estimate rhat(DrawMatrix x);

}  // namespace planmill::diagnose
