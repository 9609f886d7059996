#pragma once
// Bulk effective sample size: ESS of the rank-normalised split chains (posterior::ess_bulk).
#include "planmill/diagnose/draw_matrix.hpp"

namespace planmill::diagnose {

[[nodiscard]] Estimate ess_bulk(DrawMatrix x);

}  // namespace planmill::diagnose
