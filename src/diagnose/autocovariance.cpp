#include "planmill/diagnose/autocovariance.hpp"

#include <algorithm>

#include "diagnose/fft.hpp"

namespace planmill::diagnose {

std::vector<double> autocovariance(std::span<const double> chain) {
  const std::size_t n = chain.size();
  std::vector<double> acov(n, 0.0);
  if (n == 0 || std::all_of(chain.begin(), chain.end(), [&](double v) { return v == chain[0]; })) {
    return acov;
  }
  long double sum = 0.0L;
  for (double v : chain) sum += v;
  const auto mean = static_cast<double>(sum / static_cast<long double>(n));
  // Zero-padding to at least 2n makes the circular correlation the linear one for lags < n.
  const std::size_t p = detail::next_power_of_two(2 * n);
  std::vector<double> re(p, 0.0), im(p, 0.0);
  double squares = 0.0;
  for (std::size_t i = 0; i < n; ++i) {
    re[i] = chain[i] - mean;
    squares += re[i] * re[i];
  }
  const detail::Fft fft(p);
  fft.forward(re, im);
  for (std::size_t k = 0; k < p; ++k) {
    re[k] = re[k] * re[k] + im[k] * im[k];
    im[k] = 0.0;
  }
  fft.inverse(re, im);
  const double scale = squares / static_cast<double>(n) / re[0];
  for (std::size_t t = 0; t < n; ++t) acov[t] = re[t] * scale;
  return acov;
}

}  // namespace planmill::diagnose
