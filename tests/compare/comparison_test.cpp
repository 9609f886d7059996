// Hand-worked checks of the comparison core (docs/compare.md).
#include <gtest/gtest.h>

#include <cmath>
#include <numeric>
#include <vector>

#include "planmill/compare/comparison.hpp"
#include "planmill/diagnose/ess_tail.hpp"

namespace planmill::compare {
namespace {

TEST(Percentiles, TypeSevenOnOneToTen) {
  // Hyndman and Fan (1996) type 7 by hand on 1..10: h = 9 p, so p = 0.25 gives h = 2.25 and
  // 3 + 0.25 (4 - 3) = 3.25; p = 0.5 gives 5.5; p = 0.005 gives 1.045; p = 0.995 gives 9.955.
  std::vector<double> v{7, 3, 10, 1, 9, 2, 8, 5, 4, 6};
  const Percentiles p = percentiles_type7(v);
  EXPECT_DOUBLE_EQ(p[0], 1.045);
  EXPECT_DOUBLE_EQ(p[1], 1.225);
  EXPECT_DOUBLE_EQ(p[2], 3.25);
  EXPECT_DOUBLE_EQ(p[3], 5.5);
  EXPECT_DOUBLE_EQ(p[4], 7.75);
  EXPECT_DOUBLE_EQ(p[5], 9.775);
  EXPECT_DOUBLE_EQ(p[6], 9.955);
  std::vector<double> one{4.0};
  EXPECT_DOUBLE_EQ(percentiles_type7(one)[2], 4.0);
  EXPECT_TRUE(std::isnan(percentiles_type7({})[3]));
}

ScalarTable counting_draws(std::size_t draws, std::size_t chains) {
  ScalarTable t{"x", std::vector<double>(draws * chains), draws, chains};
  for (std::size_t i = 0; i < t.values.size(); ++i) t.values[i] = static_cast<double>((i * 7919) % 100);
  return t;
}

TEST(CompareScalar, SharesBelowEqualAboveAndTheTail) {
  const ScalarTable t = counting_draws(100, 4);  // every value 0..99 four times
  const ScalarComparison r = compare_scalar(t, 90.0);
  EXPECT_DOUBLE_EQ(r.below, 0.90);
  EXPECT_DOUBLE_EQ(r.equal, 0.01);
  EXPECT_DOUBLE_EQ(r.above, 0.09);
  EXPECT_EQ(r.tail, Tail::upper);
  EXPECT_DOUBLE_EQ(r.beyond, 0.10);
  EXPECT_FALSE(r.beyond_every_draw);
  EXPECT_NEAR(r.mcse_beyond, std::sqrt(0.1 * 0.9 / r.ess), 1e-15);
  const ScalarComparison low = compare_scalar(t, 4.5);
  EXPECT_EQ(low.tail, Tail::lower);
  EXPECT_DOUBLE_EQ(low.beyond, 0.05);
}

TEST(CompareScalar, APlanBeyondEveryDrawGetsABoundNotZero) {
  const ScalarTable t = counting_draws(100, 4);
  const ScalarComparison r = compare_scalar(t, 1000.0);
  EXPECT_TRUE(r.beyond_every_draw);
  EXPECT_DOUBLE_EQ(r.beyond, 0.0);
  EXPECT_TRUE(std::isnan(r.mcse_beyond));
  // The indicator is all zeros, so the draws' tail ESS stands in for its ESS.
  const double tail = diagnose::ess_tail({t.values, t.draws, t.chains}).value;
  EXPECT_DOUBLE_EQ(r.ess, tail);
  EXPECT_DOUBLE_EQ(r.bound, 3.0 / tail);
  EXPECT_NE(r.ess_source.find("tail ESS"), std::string_view::npos);
  const ScalarComparison low = compare_scalar(t, -1.0);
  EXPECT_TRUE(low.beyond_every_draw);
  EXPECT_EQ(low.tail, Tail::lower);
  EXPECT_DOUBLE_EQ(low.below, 0.0);
}

TEST(CompareScalar, NanDrawsCountNowhere) {
  ScalarTable t = counting_draws(100, 4);
  t.values[3] = std::nan("");
  t.values[250] = std::nan("");
  const ScalarComparison r = compare_scalar(t, 50.0);
  EXPECT_EQ(r.missing, 2u);
  EXPECT_EQ(r.finite, 398u);
  EXPECT_NEAR(r.below + r.equal + r.above, 1.0, 1e-15);
  EXPECT_TRUE(std::isnan(compare_scalar(t, std::nan("")).beyond));
}

TEST(CompareScalar, RejectsAShapeThatDoesNotMatch) {
  ScalarTable t = counting_draws(10, 2);
  t.draws = 11;
  EXPECT_THROW((void)compare_scalar(t, 1.0), std::invalid_argument);
}

TEST(CompareVector, OverallStatisticByHand) {
  // Three positions, four draws in one chain:
  //   (0.1, 0.4, 0.7), (0.3, 0.4, 0.5), (0.2, 0.6, 0.6), (0.2, 0.2, 0.8); mean (0.2, 0.4, 0.65).
  // Draw statistics: 0.01 + 0 + 0.0025 = 0.0125; 0.01 + 0 + 0.0225 = 0.0325;
  //   0 + 0.04 + 0.0025 = 0.0425; 0 + 0.04 + 0.0225 = 0.0625.
  // Plan (0.2, 0.5, 0.9): 0 + 0.01 + 0.0625 = 0.0725, above every draw.
  VectorTable t{"v", {0.1, 0.4, 0.7, 0.3, 0.4, 0.5, 0.2, 0.6, 0.6, 0.2, 0.2, 0.8}, 4, 1, 3};
  const std::vector<double> plan{0.2, 0.5, 0.9};
  const VectorComparison r = compare_vector(t, plan);
  EXPECT_NEAR(r.mean[0], 0.2, 1e-15);
  EXPECT_NEAR(r.mean[1], 0.4, 1e-15);
  EXPECT_NEAR(r.mean[2], 0.65, 1e-15);
  EXPECT_NEAR(r.overall.plan, 0.0725, 1e-14);
  EXPECT_EQ(r.overall.name, "v.sum_squared_departure");
  EXPECT_DOUBLE_EQ(r.overall.below, 1.0);
  EXPECT_TRUE(r.overall.beyond_every_draw);
  EXPECT_NEAR(r.overall.percentiles[3], (0.0325 + 0.0425) / 2, 1e-14);
  EXPECT_TRUE(std::isnan(r.overall.bound));  // 4 draws in one chain have no ESS, so no bound
  // Position 3: draws 0.5, 0.6, 0.7, 0.8; 97.5th percentile 0.7925 < 0.9: outside both bands.
  EXPECT_TRUE(r.positions[2].outside95);
  EXPECT_TRUE(r.positions[2].outside99);
  EXPECT_DOUBLE_EQ(r.positions[2].below, 1.0);
  // Position 1: 0.2 is the median of 0.1, 0.2, 0.2, 0.3.
  EXPECT_FALSE(r.positions[0].outside95);
  EXPECT_DOUBLE_EQ(r.positions[0].below, 0.25);
  EXPECT_DOUBLE_EQ(r.positions[0].above, 0.25);
  // Position 2: 0.5 against 0.2, 0.4, 0.4, 0.6: 97.5th 0.585, inside.
  EXPECT_FALSE(r.positions[1].outside95);
}

TEST(CompareVector, FlagsThe95And99BandsApart) {
  // 1000 draws of one position, values 0..999: 2.5th 24.975, 0.5th 4.995 (type 7).
  VectorTable t{"v", std::vector<double>(1000), 1000, 1, 1};
  std::iota(t.values.begin(), t.values.end(), 0.0);
  const std::vector<double> between{10.0}, below_both{2.0}, inside{500.0};
  EXPECT_TRUE(compare_vector(t, between).positions[0].outside95);
  EXPECT_FALSE(compare_vector(t, between).positions[0].outside99);
  EXPECT_TRUE(compare_vector(t, below_both).positions[0].outside99);
  EXPECT_FALSE(compare_vector(t, inside).positions[0].outside95);
}

}  // namespace
}  // namespace planmill::compare
