#include <cmath>
#include <limits>

#include <boost/math/special_functions/gamma.hpp>

#include "planmill/selftest/selftest.hpp"

namespace planmill {

// The upper tail of chi-square(df) at s is the regularised upper incomplete gamma Q(df/2, s/2);
// Boost.Math computes it (boost/math/special_functions/gamma.hpp, gamma_q), so no series or
// continued fraction of our own.
double chi_square_upper_tail(double statistic, double df) {
  if (!(df > 0) || std::isnan(statistic)) return std::numeric_limits<double>::quiet_NaN();
  if (statistic <= 0) return 1.0;
  if (std::isinf(statistic)) return 0.0;
  return boost::math::gamma_q(df / 2.0, statistic / 2.0);
}

}  // namespace planmill
