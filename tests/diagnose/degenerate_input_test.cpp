// Degenerate input gives NaN with a reason, never an exception or a crash (the convention of
// posterior, which returns NA for constant or non-finite draws; common practice otherwise).
#include <gtest/gtest.h>

#include <cmath>
#include <limits>

#include "planmill/diagnose/ess_bulk.hpp"
#include "planmill/diagnose/ess_mean.hpp"
#include "planmill/diagnose/ess_quantile.hpp"
#include "planmill/diagnose/ess_tail.hpp"
#include "planmill/diagnose/mcse_mean.hpp"
#include "planmill/diagnose/mcse_quantile.hpp"
#include "planmill/diagnose/observable_diagnostics.hpp"
#include "planmill/diagnose/rhat.hpp"
#include "planmill/diagnose/rhat_bulk.hpp"
#include "planmill/diagnose/rhat_folded.hpp"
#include "synthetic_draws.hpp"

namespace planmill::diagnose {
namespace {

void expect_all_nan(DrawMatrix x, const std::string& why) {
  SCOPED_TRACE(why);
  for (const Estimate e : {rhat(x), rhat_bulk(x), rhat_folded(x), ess_bulk(x), ess_tail(x),
                           ess_mean(x), ess_quantile(x, 0.5), mcse_mean(x), mcse_quantile(x, 0.05)}) {
    EXPECT_TRUE(std::isnan(e.value));
    EXPECT_FALSE(e.reason.empty());
  }
  const auto q = diagnose_observable("q", x);
  EXPECT_TRUE(std::isnan(q.rhat));
  EXPECT_TRUE(std::isnan(q.ess_bulk));
  EXPECT_FALSE(q.note.empty());
}

TEST(DegenerateInput, ConstantDraws) {
  const std::vector<double> v(400, 2.0);
  expect_all_nan({v, 100, 4}, "constant");
  EXPECT_EQ(rhat({v, 100, 4}).reason, "all draws are equal");
}

TEST(DegenerateInput, TooFewDraws) {
  const std::vector<double> v{1.0, 2.0, 3.0, 4.0, 2.0, 1.0};
  expect_all_nan({v, 3, 2}, "3 draws per chain");
  expect_all_nan({std::span<const double>(v).first(0), 0, 2}, "no draws");
  expect_all_nan({std::span<const double>(v).first(0), 0, 0}, "no chains");
}

TEST(DegenerateInput, NonFiniteDraws) {
  auto d = testing::ar1("x", 100, 4, 0.0, 3);
  d.values[17] = std::numeric_limits<double>::quiet_NaN();
  expect_all_nan(d.matrix(), "NaN");
  d.values[17] = std::numeric_limits<double>::infinity();
  expect_all_nan(d.matrix(), "Inf");
}

TEST(DegenerateInput, ShapeMismatch) {
  const std::vector<double> v(10, 1.0);
  expect_all_nan({v, 4, 4}, "values shorter than draws x chains");
}

TEST(DegenerateInput, FourOrFiveDrawsGiveRhatButNoEss) {
  // posterior's .ess() needs at least 3 draws per split chain.
  const auto d = testing::ar1("x", 5, 4, 0.0, 9);
  EXPECT_TRUE(rhat(d.matrix()).ok());
  EXPECT_FALSE(ess_bulk(d.matrix()).ok());
  EXPECT_EQ(ess_bulk(d.matrix()).reason, "fewer than 3 draws per split chain");
}

TEST(DegenerateInput, QuantileOutsideRange) {
  const auto d = testing::ar1("x", 50, 2, 0.0, 9);
  EXPECT_FALSE(ess_quantile(d.matrix(), 1.5).ok());
  EXPECT_FALSE(mcse_quantile(d.matrix(), -0.1).ok());
}

TEST(DegenerateInput, ConstantIndicatorForDiscreteDraws) {
  // Two values, 95% of draws at the top: I{x <= q95} is all ones, so no tail ESS (as posterior).
  auto d = testing::ar1("x", 100, 4, 0.0, 4);
  for (double& v : d.values) v = v < -1.7 ? 0.0 : 1.0;
  EXPECT_TRUE(ess_bulk(d.matrix()).ok());
  EXPECT_FALSE(ess_quantile(d.matrix(), 0.95).ok());
  EXPECT_FALSE(ess_tail(d.matrix()).ok());
}

}  // namespace
}  // namespace planmill::diagnose
