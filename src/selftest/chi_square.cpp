#include <cmath>
#include <limits>

#include "planmill/selftest/selftest.hpp"

namespace planmill {
namespace {

// Regularised lower gamma P(a, x) by its power series (converges well for x < a + 1).
double lower_series(double a, double x) {
  double term = 1.0 / a, sum = term;
  for (int n = 1; n < 10000; ++n) {
    term *= x / (a + n);
    sum += term;
    if (std::abs(term) < std::abs(sum) * 1e-16) break;
  }
  return sum * std::exp(-x + a * std::log(x) - std::lgamma(a));
}

// Regularised upper gamma Q(a, x) by its continued fraction (modified Lentz), for x >= a + 1.
double upper_fraction(double a, double x) {
  constexpr double tiny = 1e-300;
  double b = x + 1.0 - a, c = 1.0 / tiny, d = 1.0 / b, h = d;
  for (int i = 1; i < 10000; ++i) {
    const double an = -i * (i - a);
    b += 2.0;
    d = an * d + b;
    if (std::abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (std::abs(c) < tiny) c = tiny;
    d = 1.0 / d;
    const double delta = d * c;
    h *= delta;
    if (std::abs(delta - 1.0) < 1e-16) break;
  }
  return std::exp(-x + a * std::log(x) - std::lgamma(a)) * h;
}

}  // namespace

double chi_square_upper_tail(double statistic, double df) {
  if (!(df > 0) || std::isnan(statistic)) return std::numeric_limits<double>::quiet_NaN();
  if (statistic <= 0) return 1.0;
  const double a = df / 2.0, x = statistic / 2.0;
  return x < a + 1.0 ? 1.0 - lower_series(a, x) : upper_fraction(a, x);
}

}  // namespace planmill
