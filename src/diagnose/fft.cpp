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
  for (std::size_t first = 0; first < n_; first += block)
    stages(xr, xi, first, first + block, 4, block, sign);
  stages(xr, xi, 0, n_, 2 * block, n_, sign);
}

void Fft::stages(double* xr, double* xi, std::size_t begin, std::size_t end, std::size_t from,
                 std::size_t to, double sign) const {
  std::size_t len = from;
  for (; 2 * len <= to; len *= 4) butterfly_pairs(xr, xi, begin, end, len, sign);
  if (len <= to) butterflies(xr, xi, begin, end, len, sign);
}

// Stages len and 2 len fused: each group of four points is loaded once and gets the same four
// radix-2 butterflies, in the same order, as the two separate stages (identical results).
void Fft::butterfly_pairs(double* __restrict xr, double* __restrict xi, std::size_t begin,
                          std::size_t end, std::size_t len, double sign) const {
  const std::size_t half = len / 2;
  const double* __restrict w1r = cos_.data() + half;  // stage len: e^{-2 pi i j / len}
  const double* __restrict w1s = sin_.data() + half;
  const double* __restrict w2r = cos_.data() + len;  // stage 2 len: e^{-2 pi i j / (2 len)}
  const double* __restrict w2s = sin_.data() + len;
  for (std::size_t start = begin; start < end; start += 2 * len) {
    double* __restrict ar = xr + start;
    double* __restrict ai = xi + start;
    for (std::size_t j = 0; j < half; ++j) {
      const std::size_t a = j, b = j + half, c = j + len, d = j + len + half;
      const double c1 = w1r[j], s1 = sign * w1s[j];
      double vr = ar[b] * c1 - ai[b] * s1, vi = ar[b] * s1 + ai[b] * c1;
      double br = ar[a] - vr, bi = ai[a] - vi;
      double a_r = ar[a] + vr, a_i = ai[a] + vi;
      vr = ar[d] * c1 - ai[d] * s1;
      vi = ar[d] * s1 + ai[d] * c1;
      double dr = ar[c] - vr, di = ai[c] - vi;
      double c_r = ar[c] + vr, c_i = ai[c] + vi;
      const double c2 = w2r[j], s2 = sign * w2s[j];
      vr = c_r * c2 - c_i * s2;
      vi = c_r * s2 + c_i * c2;
      ar[c] = a_r - vr;
      ai[c] = a_i - vi;
      ar[a] = a_r + vr;
      ai[a] = a_i + vi;
      const double c3 = w2r[j + half], s3 = sign * w2s[j + half];
      vr = dr * c3 - di * s3;
      vi = dr * s3 + di * c3;
      ar[d] = br - vr;
      ai[d] = bi - vi;
      ar[b] = br + vr;
      ai[b] = bi + vi;
    }
  }
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
