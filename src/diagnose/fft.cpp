#include "diagnose/fft.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <utility>

namespace planmill::diagnose::detail {

std::size_t next_power_of_two(std::size_t n) {
  std::size_t p = 1;
  while (p < n) p <<= 1;
  return p;
}

Fft::Fft(std::size_t n) : n_(n), cos_(n), sin_(n), bit_reversed_(n) {
  for (std::size_t len = 2; len <= n; len <<= 1) {
    const std::size_t half = len / 2;
    for (std::size_t j = 0; j < half; ++j) {
      // The same angles as k = j * (n / len) of the full-length table, for identical values.
      const std::size_t k = j * (n / len);
      const double angle =
          -2.0 * std::numbers::pi * static_cast<double>(k) / static_cast<double>(n);
      cos_[half + j] = std::cos(angle);
      sin_[half + j] = std::sin(angle);
    }
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
  double* __restrict xr = re.data();
  double* __restrict xi = im.data();
  // Length-2 stage: the only twiddle is 1.
  if (n_ >= 2) {
    for (std::size_t s = 0; s < n_; s += 2) {
      const double br = xr[s + 1], bi = xi[s + 1];
      xr[s + 1] = xr[s] - br;
      xi[s + 1] = xi[s] - bi;
      xr[s] += br;
      xi[s] += bi;
    }
  }
  const double sign = inverse ? -1.0 : 1.0;
  // Stages up to kBlock touch only their own block of kBlock points: finish those stages block by
  // block while the block sits in cache, then run the longer stages over the whole array.
  constexpr std::size_t kBlock = 8192;  // 128 KiB of points
  const std::size_t block = std::min(kBlock, n_);
  for (std::size_t first = 0; first < n_; first += block) {
    for (std::size_t len = 4; len <= block; len <<= 1) {
      butterflies(xr, xi, first, first + block, len, sign);
    }
  }
  for (std::size_t len = 2 * block; len <= n_; len <<= 1) butterflies(xr, xi, 0, n_, len, sign);
}

void Fft::butterflies(double* __restrict xr, double* __restrict xi, std::size_t begin,
                      std::size_t end, std::size_t len, double sign) const {
  const std::size_t half = len / 2;
  const double* __restrict wr = cos_.data() + half;
  const double* __restrict ws = sin_.data() + half;
  for (std::size_t start = begin; start < end; start += len) {
    double* __restrict ar = xr + start;
    double* __restrict ai = xi + start;
    double* __restrict br = ar + half;
    double* __restrict bi = ai + half;
    for (std::size_t j = 0; j < half; ++j) {
      const double c = wr[j], s = sign * ws[j];
      const double vr = br[j] * c - bi[j] * s;
      const double vi = br[j] * s + bi[j] * c;
      br[j] = ar[j] - vr;
      bi[j] = ai[j] - vi;
      ar[j] += vr;
      ai[j] += vi;
    }
  }
}

}  // namespace planmill::diagnose::detail
