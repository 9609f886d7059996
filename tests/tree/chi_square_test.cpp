// Checks of the chi-square p-value used by the uniformity tests.
#include "chi_square.hpp"

#include <gtest/gtest.h>

#include <cmath>

namespace planmill::test {
namespace {

double chi_square_density(double x, double df) {
  const double k = 0.5 * df;
  return std::exp((k - 1.0) * std::log(x) - 0.5 * x - k * std::log(2.0) - std::lgamma(k));
}

TEST(ChiSquare, ClosedFormsForOneAndTwoDegreesOfFreedom) {
  // df = 2: Q(1, x/2) = exp(-x/2); df = 1: Q(1/2, x/2) = erfc(sqrt(x/2)) (standard identities).
  for (const double x : {0.01, 0.3, 1.0, 2.5, 4.0, 9.0, 20.0, 60.0}) {
    EXPECT_NEAR(chi_square_upper_tail(x, 2.0), std::exp(-0.5 * x),
                1e-13 * std::exp(-0.5 * x) + 1e-15);
    const double q1 = std::erfc(std::sqrt(0.5 * x));
    EXPECT_NEAR(chi_square_upper_tail(x, 1.0), q1, 1e-12 * q1 + 1e-15);
  }
  // Even df = 2m: Q(m, y) = exp(-y) Σ_{j<m} y^j / j! (Poisson tail identity).
  for (const double x : {3.0, 50.0, 180.0, 260.0}) {
    for (const int m : {3, 10, 96}) {
      const double y = 0.5 * x;
      double term = std::exp(-y), sum = 0.0;
      for (int j = 0; j < m; ++j) {
        sum += term;
        term *= y / (j + 1);
      }
      EXPECT_NEAR(chi_square_upper_tail(x, 2.0 * m), sum, 1e-11 * sum + 1e-300)
          << "x=" << x << " df=" << 2 * m;
    }
  }
}

TEST(ChiSquare, MatchesPublishedCriticalValues) {
  // NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.6.7.4, "Critical values of the
  // chi-square distribution" (upper and lower tables, 3 decimals). Values [from memory] of that
  // table; the tolerance is what rounding the quantile to 3 decimals can move the tail.
  struct Row {
    double df, quantile, upper_tail;
  };
  const Row rows[] = {
      {1, 3.841, 0.05},     {1, 6.635, 0.01},     {1, 10.828, 0.001},    {5, 11.070, 0.05},
      {5, 15.086, 0.01},    {10, 18.307, 0.05},   {10, 23.209, 0.01},    {10, 29.588, 0.001},
      {100, 124.342, 0.05}, {100, 135.807, 0.01}, {100, 149.449, 0.001}, {100, 77.929, 0.95},
      {100, 70.065, 0.99},
  };
  for (const Row& row : rows) {
    const double tolerance = 0.5e-3 * chi_square_density(row.quantile, row.df) * 1.01 + 1e-12;
    EXPECT_NEAR(chi_square_upper_tail(row.quantile, row.df), row.upper_tail, tolerance)
        << "df=" << row.df << " x=" << row.quantile;
  }
}

TEST(ChiSquare, UniformCountsGiveLargePValueAndSkewedCountsSmall) {
  const std::uint64_t even[] = {100, 100, 100, 100};
  EXPECT_DOUBLE_EQ(chi_square_uniform(even).statistic, 0.0);
  EXPECT_DOUBLE_EQ(chi_square_uniform(even).p_value, 1.0);
  const std::uint64_t skewed[] = {150, 100, 100, 50};  // X² = 50, df = 3
  const ChiSquareResult r = chi_square_uniform(skewed);
  EXPECT_DOUBLE_EQ(r.statistic, 50.0);
  EXPECT_LT(r.p_value, 1e-9);
}

}  // namespace
}  // namespace planmill::test
