#pragma once
// Chi-square goodness of fit for the uniformity tests: the statistic and its upper-tail p-value
// Q(df/2, x/2), with Q the regularized upper incomplete gamma function (power series below
// a + 1, Lentz's continued fraction above). Checked in chi_square_test.cpp against closed forms
// and a published table of quantiles.
#include <cmath>
#include <cstdint>
#include <limits>
#include <span>
#include <stdexcept>

namespace planmill::test {

// Regularized upper incomplete gamma Q(a, x) = Γ(a, x) / Γ(a), a > 0, x >= 0.
inline double gamma_q(double a, double x) {
  if (!(a > 0.0) || !(x >= 0.0)) throw std::invalid_argument("gamma_q: need a > 0, x >= 0");
  if (x == 0.0) return 1.0;
  const double log_prefactor = a * std::log(x) - x - std::lgamma(a);
  constexpr double kEps = 1e-15;
  if (x < a + 1.0) {
    // P(a, x) = x^a e^-x / Γ(a+1) · Σ_n x^n / ((a+1)...(a+n)).
    double term = 1.0 / a, sum = term;
    for (int n = 1; n < 100000; ++n) {
      term *= x / (a + n);
      sum += term;
      if (std::abs(term) < std::abs(sum) * kEps) break;
    }
    return 1.0 - sum * std::exp(log_prefactor);
  }
  // Q(a, x) = x^a e^-x / Γ(a) · 1/(x+1-a- 1·(1-a)/(x+3-a- 2·(2-a)/(x+5-a- ...))).
  constexpr double kTiny = 1e-300;
  double b = x + 1.0 - a, c = 1.0 / kTiny, d = 1.0 / b, h = d;
  for (int i = 1; i < 100000; ++i) {
    const double an = -i * (i - a);
    b += 2.0;
    d = an * d + b;
    if (std::abs(d) < kTiny) d = kTiny;
    c = b + an / c;
    if (std::abs(c) < kTiny) c = kTiny;
    d = 1.0 / d;
    const double delta = d * c;
    h *= delta;
    if (std::abs(delta - 1.0) < kEps) break;
  }
  return std::exp(log_prefactor) * h;
}

// P(X >= x) for X ~ chi-square with df degrees of freedom.
inline double chi_square_upper_tail(double x, double df) { return gamma_q(0.5 * df, 0.5 * x); }

struct ChiSquareResult {
  double statistic = 0.0;
  double df = 0.0;
  double p_value = 1.0;
};

// Observed counts against equal expected counts.
inline ChiSquareResult chi_square_uniform(std::span<const std::uint64_t> counts) {
  double total = 0.0;
  for (const auto c : counts) total += static_cast<double>(c);
  const double expected = total / static_cast<double>(counts.size());
  ChiSquareResult r;
  for (const auto c : counts) {
    const double diff = static_cast<double>(c) - expected;
    r.statistic += diff * diff / expected;
  }
  r.df = static_cast<double>(counts.size() - 1);
  r.p_value = chi_square_upper_tail(r.statistic, r.df);
  return r;
}

}  // namespace planmill::test
