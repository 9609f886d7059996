// The verdict's handling of quantities that carry no evidence (constant, or discrete at an extreme
// quantile). Draws are built by hand so that the cases are exact.
#include "planmill/diagnose/verdict.hpp"

#include <gtest/gtest.h>

#include <vector>

#include "planmill/base/random.hpp"

namespace planmill::diagnose {
namespace {

std::vector<double> draws(std::size_t n, std::size_t chains, std::uint64_t seed, double (*f)(Rng&)) {
  Rng rng = make_stream(seed, 0);
  std::vector<double> v(n * chains);
  for (auto& x : v) x = f(rng);
  return v;
}

QuantityDiagnostics diagnose(const char* name, const std::vector<double>& v, std::size_t chains) {
  return diagnose_quantity(name, {v, v.size() / chains, chains});
}

TEST(Verdict, AConstantQuantityIsNotJudgedAndDoesNotFail) {
  const auto fine = draws(1000, 4, 1, [](Rng& r) { return uniform01(r); });
  const std::vector<double> constant(4000, 2.0);
  const auto v = judge({diagnose("cut_edges", fine, 4), diagnose("county_splits", constant, 4)});
  EXPECT_TRUE(v.pass);
  ASSERT_EQ(v.remarks.size(), 1U);
  EXPECT_EQ(v.remarks[0].name, "county_splits");
}

TEST(Verdict, OnlyConstantQuantitiesFail) {
  const std::vector<double> constant(4000, 0.0);
  EXPECT_FALSE(judge({diagnose("energy", constant, 4)}).pass);
}

TEST(Verdict, ADiscreteQuantityAtAnExtremeQuantileIsJudgedWithoutTailEss) {
  // Seats in {1, 2, 3} with P(3) = 2%: the 95% quantile is 2 ... and P(x <= 3) = 1, so the
  // indicator at the largest value is constant when the 95% quantile equals it; use P(1) = 90%
  // so the 5% and 95% quantiles are 1 and 2, and P(3) = 0 makes 2 the largest value.
  const auto seats = draws(1000, 4, 2, [](Rng& r) { return uniform01(r) < 0.9 ? 1.0 : 2.0; });
  const auto q = diagnose("seats.gov.A", seats, 4);
  ASSERT_TRUE(std::isnan(q.ess_tail)) << "the case must have an undefined tail ESS";
  ASSERT_TRUE(lacks_tail_only(q));
  const auto v = judge({q}, {1.01, 400});
  EXPECT_TRUE(v.pass) << (v.failures.empty() ? "" : v.failures[0].problem);
  ASSERT_EQ(v.remarks.size(), 1U);
  // The same quantity still fails on bulk ESS when the bar is higher than its bulk ESS.
  EXPECT_FALSE(judge({q}, {1.01, q.ess_bulk + 1}).pass);
}

TEST(Verdict, ANonFiniteDrawStillFails) {
  auto v = draws(1000, 4, 3, [](Rng& r) { return uniform01(r); });
  v[17] = std::numeric_limits<double>::quiet_NaN();
  EXPECT_FALSE(judge({diagnose("cut_edges", v, 4)}).pass);
}

}  // namespace
}  // namespace planmill::diagnose
