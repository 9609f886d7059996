#include "diagnose/fft.hpp"

#include <cmath>
#include <numbers>
#include <utility>

namespace planmill::diagnose::detail {

std::size_t next_power_of_two(std::size_t n) {
  std::size_t p = 1;
  while (p < n) p <<= 1;
  return p;
}

Fft::Fft(std::size_t n) : n_(n), cos_(n / 2), sin_(n / 2), bit_reversed_(n) {
  for (std::size_t k = 0; k < n / 2; ++k) {
    const double angle = -2.0 * std::numbers::pi * static_cast<double>(k) / static_cast<double>(n);
    cos_[k] = std::cos(angle);
    sin_[k] = std::sin(angle);
  }
  std::size_t bits = 0;
  while ((std::size_t{1} << bits) < n) ++bits;
  for (std::size_t i = 0; i < n; ++i) {
    std::size_t r = 0;
    for (std::size_t b = 0; b < bits; ++b) r |= ((i >> b) & 1U) << (bits - 1 - b);
    bit_reversed_[i] = static_cast<std::uint32_t>(r);
  }
}

void Fft::run(std::vector<double>& re, std::vector<double>& im, bool inverse) const {
  for (std::size_t i = 0; i < n_; ++i) {
    const std::size_t j = bit_reversed_[i];
    if (i < j) {
      std::swap(re[i], re[j]);
      std::swap(im[i], im[j]);
    }
  }
  const double sign = inverse ? -1.0 : 1.0;
  for (std::size_t len = 2; len <= n_; len <<= 1) {
    const std::size_t half = len / 2, stride = n_ / len;
    for (std::size_t start = 0; start < n_; start += len) {
      double* ar = re.data() + start;
      double* ai = im.data() + start;
      for (std::size_t j = 0; j < half; ++j) {
        const double wr = cos_[j * stride], wi = sign * sin_[j * stride];
        const double vr = ar[j + half] * wr - ai[j + half] * wi;
        const double vi = ar[j + half] * wi + ai[j + half] * wr;
        ar[j + half] = ar[j] - vr;
        ai[j + half] = ai[j] - vi;
        ar[j] += vr;
        ai[j] += vi;
      }
    }
  }
}

}  // namespace planmill::diagnose::detail
