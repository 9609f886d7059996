// The verdict's handling of observables that carry no evidence (constant, or discrete at an extreme
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

ObservableDiagnostics diagnose(const char* name, const std::vector<double>& v, std::size_t chains) {
  return diagnose_observable(name, {v, v.size() / chains, chains});
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
  // The same observable still fails on bulk ESS when the bar is higher than its bulk ESS.
  EXPECT_FALSE(judge({q}, {1.01, q.ess_bulk + 1}).pass);
}

TEST(Verdict, AQuantityConstantWithinEachChainButNotAcrossFails) {
  // Each chain stuck at its own value: the clearest failure to mix, never "not judged".
  std::vector<double> stuck(4000);
  for (std::size_t i = 0; i < stuck.size(); ++i) stuck[i] = static_cast<double>(i / 1000);
  const auto fine = draws(1000, 4, 4, [](Rng& r) { return uniform01(r); });
  const auto v = judge({diagnose("cut_edges", fine, 4), diagnose("seats", stuck, 4)});
  EXPECT_FALSE(v.pass);
  for (const auto& r : v.remarks) EXPECT_NE(r.name, "seats") << r.what;
  ASSERT_EQ(v.failures.size(), 1U);
  EXPECT_EQ(v.failures[0].name, "seats");
  EXPECT_NE(v.failures[0].problem.find("different between chains"), std::string::npos)
      << v.failures[0].problem;
}

TEST(Verdict, TinyValuesThatVaryAreJudged) {
  // Values near 1e-170: their squares underflow a double, but they are not equal.
  auto tiny = draws(1000, 4, 5, [](Rng& r) { return uniform01(r); });
  for (double& x : tiny) x *= 1e-170;
  const auto q = diagnose("tiny", tiny, 4);
  EXPECT_FALSE(is_constant(q));
  EXPECT_GT(q.sd, 0.0);
  const auto v = judge({q});
  EXPECT_TRUE(v.remarks.empty());
  EXPECT_TRUE(v.pass) << (v.failures.empty() ? "" : v.failures[0].problem);
}

TEST(Verdict, OnlyExactEqualityIsNotJudged) {
  std::vector<double> almost(4000, 1.0);
  almost[1234] = std::nextafter(1.0, 2.0);
  const auto q = diagnose("almost", almost, 4);
  EXPECT_FALSE(is_constant(q));
  EXPECT_TRUE(judge({q}).remarks.empty()) << "judged, not left aside as constant";
}

TEST(Verdict, ANonFiniteDrawStillFails) {
  auto v = draws(1000, 4, 3, [](Rng& r) { return uniform01(r); });
  v[17] = std::numeric_limits<double>::quiet_NaN();
  EXPECT_FALSE(judge({diagnose("cut_edges", v, 4)}).pass);
}

}  // namespace
}  // namespace planmill::diagnose
