#include "diagnose/fft.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace planmill::diagnose::detail {
namespace {
// Stages up to kBlock touch only their own block of kBlock points: those stages run block by
// block while the block sits in cache, the longer ones over the whole array.
constexpr std::size_t kBlock = 8192;  // 128 KiB of points
}  // namespace

std::size_t next_power_of_two(std::size_t n) {
  std::size_t p = 1;
  while (p < n) p <<= 1;
  return p;
}

Fft::Fft(std::size_t n) : n_(n), cos_(n), sin_(n) {
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
}

void Fft::forward(std::vector<double>& re, std::vector<double>& im) const {
  if (n_ < 2) return;
  const std::size_t block = std::min(kBlock, n_);
  dif_stages(re.data(), im.data(), 0, n_, n_, 2 * block);
  for (std::size_t first = 0; first < n_; first += block)
    dif_stages(re.data(), im.data(), first, first + block, block, 2);
}

void Fft::inverse(std::vector<double>& re, std::vector<double>& im) const {
  if (n_ < 2) return;
  const std::size_t block = std::min(kBlock, n_);
  for (std::size_t first = 0; first < n_; first += block)
    dit_stages(re.data(), im.data(), first, first + block, 2, block);
  dit_stages(re.data(), im.data(), 0, n_, 2 * block, n_);
}

void Fft::dif_stages(double* xr, double* xi, std::size_t begin, std::size_t end, std::size_t from,
                     std::size_t to) const {
  std::size_t len = from;
  for (; len >= 2 * to; len /= 4) dif_pairs(xr, xi, begin, end, len);
  if (len >= to && len >= 2) dif_single(xr, xi, begin, end, len);
}

void Fft::dit_stages(double* xr, double* xi, std::size_t begin, std::size_t end, std::size_t from,
                     std::size_t to) const {
  std::size_t len = from;
  for (; 2 * len <= to; len *= 4) dit_pairs(xr, xi, begin, end, len);
  if (len <= to) dit_single(xr, xi, begin, end, len);
}

// Forward stages len and len / 2: (a, c) and (b, d) at distance len / 2 with twiddles
// w_len^j and w_len^(j + len/4), then (a, b) and (c, d) at distance len / 4 with w_(len/2)^j.
void Fft::dif_pairs(double* __restrict xr, double* __restrict xi, std::size_t begin,
                    std::size_t end, std::size_t len) const {
  const std::size_t quarter = len / 4;
  const double* __restrict w1r = cos_.data() + len / 2;  // stage len
  const double* __restrict w1s = sin_.data() + len / 2;
  const double* __restrict w2r = cos_.data() + quarter;  // stage len / 2
  const double* __restrict w2s = sin_.data() + quarter;
  for (std::size_t start = begin; start < end; start += len) {
    double* __restrict ar = xr + start;
    double* __restrict ai = xi + start;
    for (std::size_t j = 0; j < quarter; ++j) {
      const std::size_t a = j, b = j + quarter, c = j + 2 * quarter, d = j + 3 * quarter;
      const double a1r = ar[a] + ar[c], a1i = ai[a] + ai[c];
      double tr = ar[a] - ar[c], ti = ai[a] - ai[c];
      const double c1r = tr * w1r[j] - ti * w1s[j], c1i = tr * w1s[j] + ti * w1r[j];
      const double b1r = ar[b] + ar[d], b1i = ai[b] + ai[d];
      tr = ar[b] - ar[d];
      ti = ai[b] - ai[d];
      const double d1r = tr * w1r[j + quarter] - ti * w1s[j + quarter];
      const double d1i = tr * w1s[j + quarter] + ti * w1r[j + quarter];
      const double c2 = w2r[j], s2 = w2s[j];
      ar[a] = a1r + b1r;
      ai[a] = a1i + b1i;
      tr = a1r - b1r;
      ti = a1i - b1i;
      ar[b] = tr * c2 - ti * s2;
      ai[b] = tr * s2 + ti * c2;
      ar[c] = c1r + d1r;
      ai[c] = c1i + d1i;
      tr = c1r - d1r;
      ti = c1i - d1i;
      ar[d] = tr * c2 - ti * s2;
      ai[d] = tr * s2 + ti * c2;
    }
  }
}

void Fft::dif_single(double* __restrict xr, double* __restrict xi, std::size_t begin,
                     std::size_t end, std::size_t len) const {
  const std::size_t half = len / 2;
  const double* __restrict wr = cos_.data() + half;
  const double* __restrict ws = sin_.data() + half;
  for (std::size_t start = begin; start < end; start += len) {
    double* __restrict ar = xr + start;
    double* __restrict ai = xi + start;
    double* __restrict br = ar + half;
    double* __restrict bi = ai + half;
    for (std::size_t j = 0; j < half; ++j) {
      const double tr = ar[j] - br[j], ti = ai[j] - bi[j];
      ar[j] += br[j];
      ai[j] += bi[j];
      br[j] = tr * wr[j] - ti * ws[j];
      bi[j] = tr * ws[j] + ti * wr[j];
    }
  }
}

// Inverse stages len and 2 len (conjugate twiddles): the mirror image of dif_pairs.
void Fft::dit_pairs(double* __restrict xr, double* __restrict xi, std::size_t begin,
                    std::size_t end, std::size_t len) const {
  const std::size_t half = len / 2;
  const double* __restrict w1r = cos_.data() + half;  // stage len: e^{+2 pi i j / len}
  const double* __restrict w1s = sin_.data() + half;
  const double* __restrict w2r = cos_.data() + len;  // stage 2 len
  const double* __restrict w2s = sin_.data() + len;
  for (std::size_t start = begin; start < end; start += 2 * len) {
    double* __restrict ar = xr + start;
    double* __restrict ai = xi + start;
    for (std::size_t j = 0; j < half; ++j) {
      const std::size_t a = j, b = j + half, c = j + len, d = j + len + half;
      const double c1 = w1r[j], s1 = -w1s[j];
      double vr = ar[b] * c1 - ai[b] * s1, vi = ar[b] * s1 + ai[b] * c1;
      const double br = ar[a] - vr, bi = ai[a] - vi;
      const double a_r = ar[a] + vr, a_i = ai[a] + vi;
      vr = ar[d] * c1 - ai[d] * s1;
      vi = ar[d] * s1 + ai[d] * c1;
      const double dr = ar[c] - vr, di = ai[c] - vi;
      const double c_r = ar[c] + vr, c_i = ai[c] + vi;
      const double c2 = w2r[j], s2 = -w2s[j];
      vr = c_r * c2 - c_i * s2;
      vi = c_r * s2 + c_i * c2;
      ar[c] = a_r - vr;
      ai[c] = a_i - vi;
      ar[a] = a_r + vr;
      ai[a] = a_i + vi;
      const double c3 = w2r[j + half], s3 = -w2s[j + half];
      vr = dr * c3 - di * s3;
      vi = dr * s3 + di * c3;
      ar[d] = br - vr;
      ai[d] = bi - vi;
      ar[b] = br + vr;
      ai[b] = bi + vi;
    }
  }
}

void Fft::dit_single(double* __restrict xr, double* __restrict xi, std::size_t begin,
                     std::size_t end, std::size_t len) const {
  const std::size_t half = len / 2;
  const double* __restrict wr = cos_.data() + half;
  const double* __restrict ws = sin_.data() + half;
  for (std::size_t start = begin; start < end; start += len) {
    double* __restrict ar = xr + start;
    double* __restrict ai = xi + start;
    double* __restrict br = ar + half;
    double* __restrict bi = ai + half;
    for (std::size_t j = 0; j < half; ++j) {
      const double c = wr[j], s = -ws[j];
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
