#pragma once
// Chi-square goodness of fit for the uniformity tests: the statistic against equal expected
// counts and its upper-tail p-value. The tail is checked in chi_square_test.cpp against closed
// forms and a published table of quantiles.
#include <cmath>
#include <cstdint>
#include <limits>
#include <span>
#include <stdexcept>

#include "planmill/selftest/selftest.hpp"

namespace planmill::test {

// The p-value comes from the library's chi_square_upper_tail (src/selftest), so
// chi_square_test.cpp checks the same code the self-test uses.
using planmill::chi_square_upper_tail;

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
