// Effective sample size of a (split) matrix, eqs. (5)-(11) of Vehtari et al. (2021) in the exact
// arrangement of posterior 1.4.0's .ess(), so that the truncation and the cap agree with it.
#include <algorithm>
#include <array>
#include <bit>
#include <cfloat>
#include <cmath>
#include <cstddef>
#include <cstring>
#include <memory>
#include <vector>

#include "diagnose/fft.hpp"
#include "diagnose/steps.hpp"

namespace planmill::diagnose::detail {
namespace {

// FFT tables are reused while the padded length stays the same (one per length and thread).
const Fft& fft_of_size(std::size_t p) {
  thread_local std::vector<std::unique_ptr<Fft>> cached;
  const auto log2 = static_cast<std::size_t>(std::countr_zero(p));
  if (cached.size() <= log2) cached.resize(log2 + 1);
  if (!cached[log2]) cached[log2] = std::make_unique<Fft>(p);
  return *cached[log2];
}

// Mean over chains of the autocovariance at lag t, on demand. Geyer's sequence usually stops
// after a few lags, so the first lags are direct sums (cost n per lag and chain); a long
// sequence (strong autocorrelation) switches to the FFT, which gives many lags at once. Both
// compute the same numbers: acov_m(t) = (1/n) sum_{i < n-t} y_i y_{i+t}, y the chain minus its
// mean.
class MeanAutocovariance {
 public:
  explicit MeanAutocovariance(const Matrix& x)
      : n_(x.draws),
        m_(x.chains),
        centred_(scratch(0)),
        mean_(scratch(1)),
        chain_mean_(scratch(2)),
        known_(0) {
    centred_.assign(x.values.begin(), x.values.end());
    mean_.assign(n_, 0.0);
    chain_mean_.assign(m_, 0.0);
    for (std::size_t c = 0; c < m_; ++c) {
      double* y = centred_.data() + c * n_;
      const bool constant = std::all_of(y, y + n_, [&](double v) { return v == y[0]; });
      const double mu = sum_of(y, n_) / static_cast<double>(n_);
      chain_mean_[c] = mu;
      // posterior gives a constant chain an autocovariance of exactly zero.
      for (std::size_t i = 0; i < n_; ++i) y[i] = constant ? 0.0 : y[i] - mu;
    }
  }

  [[nodiscard]] const std::vector<double>& chain_means() const { return chain_mean_; }

  double at(std::size_t t) {
    while (known_ <= t) {
      if (known_ >= kDirectLags || decays_slowly()) {
        by_fft(t >= short_fft_lags() ? n_ : 0);
      } else {
        known_ += direct_block(known_);
      }
    }
    return mean_[t];
  }

  // All lags by FFT now, for a sequence known to be long (the direct sums would be wasted).
  void compute_all() {
    if (known_ < n_) by_fft(n_);
  }

 private:
  static constexpr std::size_t kBlock = 8;  // lags per pass over the draws
  // A direct lag costs about as much as a few per cent of the FFT of all lags: up to this many
  // the direct sums are cheaper even when the FFT follows.
  static constexpr std::size_t kDirectLags = 48;

  // Autocovariance still above 30% of lag 0 after a block: Geyer's sequence will run far past
  // kDirectLags, so the FFT comes sooner. Only the cost depends on this guess, not the result.
  [[nodiscard]] bool decays_slowly() const {
    return known_ >= kBlock && mean_[known_ - 1] > 0.3 * mean_[0];
  }

  // Padding to p points makes the circular correlation the linear one for lags t <= p - n.
  // The short transform pads only by n / 8 (for n = 50,000: 65,536 points, lags up to 15,536);
  // a sequence that runs past that pays for the full one (p >= 2n, every lag).
  [[nodiscard]] std::size_t short_fft_size() const { return next_power_of_two(n_ + n_ / 8); }
  [[nodiscard]] std::size_t short_fft_lags() const {
    return std::min(n_, short_fft_size() - n_ + 1);
  }

  // Lags first .. first + kBlock - 1 in one pass; two draws per step and eight independent
  // sums each keep the pipeline full.
  std::size_t direct_block(std::size_t first) {
    const std::size_t count = std::min(kBlock, n_ - first);
    std::array<double, kBlock> total{};
    for (std::size_t c = 0; c < m_; ++c) {
      const double* y = centred_.data() + c * n_;
      std::array<double, kBlock> sum{};
      std::size_t i = 0;
      if (count == kBlock) {
        const double* z = y + first;
        // Four draws per step as two two-wide vectors (GCC/Clang vector extension; plain scalar
        // code here kept its sums on the stack): acc[k] gathers y_i y_{i+first+k}, i even in
        // lane 0 and odd in lane 1.
        using Pair = double __attribute__((vector_size(16)));
        auto load = [](const double* p) {
          Pair v;
          std::memcpy(&v, p, sizeof v);
          return v;
        };
        Pair acc0{}, acc1{}, acc2{}, acc3{}, acc4{}, acc5{}, acc6{}, acc7{};
        for (; i + 3 + first + kBlock <= n_; i += 4) {
          const Pair u = load(y + i), w = load(y + i + 2);
          const double* zi = z + i;
          acc0 += u * load(zi) + w * load(zi + 2);
          acc1 += u * load(zi + 1) + w * load(zi + 3);
          acc2 += u * load(zi + 2) + w * load(zi + 4);
          acc3 += u * load(zi + 3) + w * load(zi + 5);
          acc4 += u * load(zi + 4) + w * load(zi + 6);
          acc5 += u * load(zi + 5) + w * load(zi + 7);
          acc6 += u * load(zi + 6) + w * load(zi + 8);
          acc7 += u * load(zi + 7) + w * load(zi + 9);
        }
        sum = {acc0[0] + acc0[1], acc1[0] + acc1[1], acc2[0] + acc2[1], acc3[0] + acc3[1],
               acc4[0] + acc4[1], acc5[0] + acc5[1], acc6[0] + acc6[1], acc7[0] + acc7[1]};
      }
      for (std::size_t k = 0; k < count; ++k) {
        for (std::size_t j = i; j + first + k < n_; ++j) sum[k] += y[j] * y[j + first + k];
      }
      for (std::size_t k = 0; k < count; ++k) total[k] += sum[k] / static_cast<double>(n_);
    }
    for (std::size_t k = 0; k < count; ++k) mean_[first + k] = total[k] / static_cast<double>(m_);
    return count;
  }

  // Two real chains a, b per complex transform: z = a + i b, then A_k = (Z_k + conj Z_{-k})/2 and
  // B_k = (Z_k - conj Z_{-k})/2i. The inverse transform is linear, so the chains' power spectra
  // |A|^2, each scaled so that lag 0 becomes that chain's acov(0) (as posterior scales by
  // acov(0) / raw(0), raw(0) = sum_k |A_k|^2 by Parseval), are summed first and inverted once.
  // The spectra stay in the FFT's bit-reversed order throughout (fft.hpp, mirror_bin).
  // lags_needed == n_ forces the full padding; otherwise the short one.
  void by_fft(std::size_t lags_needed) {
    const bool full = lags_needed >= n_ || short_fft_lags() >= n_;
    const std::size_t p = full ? next_power_of_two(2 * n_) : short_fft_size();
    const Fft& fft = fft_of_size(p);
    thread_local std::vector<double> re, im, spectrum;  // reused: no allocation after warm-up
    re.resize(p);
    im.resize(p);
    spectrum.assign(p, 0.0);
    for (std::size_t c = 0; c < m_; c += 2) {
      std::fill(re.begin() + static_cast<std::ptrdiff_t>(n_), re.end(), 0.0);
      std::copy_n(centred_.data() + c * n_, n_, re.begin());
      if (c + 1 < m_) {
        std::fill(im.begin() + static_cast<std::ptrdiff_t>(n_), im.end(), 0.0);
        std::copy_n(centred_.data() + (c + 1) * n_, n_, im.begin());
      } else {
        std::fill(im.begin(), im.end(), 0.0);
      }
      fft.forward(re, im);
      // Slots 0 and 1 hold bins 0 and p / 2, each its own mirror.
      double total_a = re[0] * re[0] + re[1] * re[1], total_b = im[0] * im[0] + im[1] * im[1];
      re[0] *= re[0];
      re[1] *= re[1];
      im[0] *= im[0];
      im[1] *= im[1];
      for (std::size_t top = 2; top < p; top *= 2) {
        for (std::size_t i = top; i < top + top / 2; ++i) {
          const std::size_t j = mirror_bin(i, top);
          const double ar = 0.5 * (re[i] + re[j]), ai = 0.5 * (im[i] - im[j]);
          const double br = 0.5 * (im[i] + im[j]), bi = 0.5 * (re[j] - re[i]);
          const double power_a = ar * ar + ai * ai, power_b = br * br + bi * bi;
          total_a += 2.0 * power_a;  // bins k and p - k carry the same power
          total_b += 2.0 * power_b;
          re[i] = power_a;
          im[i] = power_b;
        }
      }
      const double scale_a = lag0_scale(c, total_a);
      const double scale_b = c + 1 < m_ ? lag0_scale(c + 1, total_b) : 0.0;
      spectrum[0] += scale_a * re[0] + scale_b * im[0];
      spectrum[1] += scale_a * re[1] + scale_b * im[1];
      for (std::size_t top = 2; top < p; top *= 2) {
        for (std::size_t i = top; i < top + top / 2; ++i) {
          spectrum[i] += scale_a * re[i] + scale_b * im[i];
        }
      }
    }
    for (std::size_t top = 2; top < p; top *= 2) {
      for (std::size_t i = top; i < top + top / 2; ++i) spectrum[mirror_bin(i, top)] = spectrum[i];
    }
    std::copy(spectrum.begin(), spectrum.end(), re.begin());
    std::fill(im.begin(), im.end(), 0.0);
    fft.inverse(re, im);
    known_ = full ? n_ : short_fft_lags();
    for (std::size_t t = 0; t < known_; ++t) mean_[t] = re[t] / static_cast<double>(m_);
  }

  // acov(0) / raw(0) for chain c, acov(0) a direct sum of squares; 0 for a constant chain.
  [[nodiscard]] double lag0_scale(std::size_t c, double raw0) const {
    const double* y = centred_.data() + c * n_;
    const double squares = squares_about(y, n_, 0.0);
    if (squares == 0.0 || raw0 == 0.0) return 0.0;
    return squares / static_cast<double>(n_) / raw0;
  }

  // Per-thread buffers, reused by every ESS so that no call maps fresh pages (one object alive
  // per thread at a time).
  static std::vector<double>& scratch(std::size_t which) {
    thread_local std::array<std::vector<double>, 3> v;
    return v[which];
  }

  std::size_t n_, m_;
  std::vector<double>& centred_;
  std::vector<double>& mean_;
  std::vector<double>& chain_mean_;
  std::size_t known_;
};

}  // namespace

Estimate ess_of(const Matrix& x) {
  const std::size_t n = x.draws, m = x.chains;
  if (n < 3) return Estimate::nan("fewer than 3 draws per split chain");
  double lo = x.values[0], hi = x.values[0];
  for (double v : x.values) {
    if (!std::isfinite(v)) return Estimate::nan("a value is not finite");
    lo = std::min(lo, v);
    hi = std::max(hi, v);
  }
  if (hi - lo < DBL_EPSILON) return Estimate::nan("constant after transform");

  MeanAutocovariance acov(x);
  // W, the mean within-chain variance, and var+ = (n-1)/n W + B/n, eqs. (2)-(3).
  const double mean_var = acov.at(0) * static_cast<double>(n) / static_cast<double>(n - 1);
  double var_plus = mean_var * static_cast<double>(n - 1) / static_cast<double>(n);
  if (m > 1) {
    const std::vector<double>& chain_mean = acov.chain_means();
    long double mu = 0.0L, between = 0.0L;
    for (double v : chain_mean) mu += v;
    mu /= static_cast<long double>(m);
    for (double v : chain_mean) between += (v - mu) * (v - mu);
    var_plus += static_cast<double>(between / static_cast<long double>(m - 1));
  }
  // rho_t below never falls under 1 - W / var+: when that floor is clearly positive (chains
  // disagree), Geyer's sequence runs to the full length and all lags come from the FFT.
  if (1.0 - mean_var / var_plus > 0.01) acov.compute_all();
  // Combined autocorrelation rho_t = 1 - (W - mean_m acov_m(t)) / var+, eq. (10).
  auto rho_at = [&](std::size_t t) { return 1.0 - (mean_var - acov.at(t)) / var_plus; };

  // Geyer's initial positive sequence: sum pairs rho_{2k} + rho_{2k+1} while positive, eq. (11).
  thread_local std::vector<double> rho;  // reused per thread
  rho.assign(n, 0.0);
  double rho_even = 1.0, rho_odd = rho_at(1);
  rho[0] = rho_even;
  rho[1] = rho_odd;
  std::size_t t = 0;
  while (t + 5 < n && !std::isnan(rho_even + rho_odd) && rho_even + rho_odd > 0.0) {
    t += 2;
    rho_even = rho_at(t);
    rho_odd = rho_at(t + 1);
    if (rho_even + rho_odd >= 0.0) {
      rho[t] = rho_even;
      rho[t + 1] = rho_odd;
    }
  }
  const std::size_t max_t = t;
  if (rho_even > 0.0) rho[max_t] = rho_even;  // posterior keeps a positive last even lag

  // ... made monotone: no pair sum may exceed the one before it.
  for (t = 2; t + 2 <= max_t; t += 2) {
    if (rho[t] + rho[t + 1] > rho[t - 2] + rho[t - 1]) {
      rho[t] = (rho[t - 2] + rho[t - 1]) / 2.0;
      rho[t + 1] = rho[t];
    }
  }

  // tau = -1 + 2 sum_{t < max_t} rho_t + rho_{max_t}; with max_t = 0 posterior's R indexing
  // (1:0) sums rho_0 once, kept here for agreement.
  long double sum = 0.0L;
  for (std::size_t k = 0; k < std::max<std::size_t>(max_t, 1); ++k) sum += rho[k];
  double tau = -1.0 + 2.0 * static_cast<double>(sum) + rho[max_t];
  const double draws = static_cast<double>(m * n);
  tau = std::max(tau, 1.0 / std::log10(draws));  // posterior caps ESS at S log10(S)
  return {draws / tau, {}};
}

}  // namespace planmill::diagnose::detail
