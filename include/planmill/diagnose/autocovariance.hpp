#pragma once
// Autocovariance of one chain by FFT: acov[t] = (1/n) sum_{i < n-t} (x_i - xbar)(x_{i+t} - xbar),
// t = 0..n-1 (the biased estimator, as posterior's autocovariance). All zeros for a constant chain;
// empty for empty input.
#include <span>
#include <vector>

namespace planmill::diagnose {

[[nodiscard]] std::vector<double> autocovariance(std::span<const double> chain);

}  // namespace planmill::diagnose
