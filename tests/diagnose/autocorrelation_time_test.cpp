// AR(1) checks against analytic values: x_t = phi x_{t-1} + e_t has integrated autocorrelation
// time tau = (1 + phi) / (1 - phi) and autocorrelation phi^t (any time-series text, e.g.
// Brockwell and Davis, Time Series: Theory and Methods, sec. 3.1 [from memory]).
#include <gtest/gtest.h>

#include <cmath>
#include <numeric>

#include "planmill/diagnose/autocovariance.hpp"
#include "planmill/diagnose/ess_mean.hpp"
#include "synthetic_draws.hpp"

namespace planmill::diagnose {
namespace {

// tau_hat = (chains x draws) / ESS over independent replicate data sets; the mean over replicates
// is compared with the analytic tau by a z-score with the replicates' own standard error.
// Draws are long enough that the estimator's O(tau / draws) bias stays well below that error.
class Ar1Tau : public ::testing::TestWithParam<double> {};

TEST_P(Ar1Tau, MatchesAnalyticIntegratedAutocorrelationTime) {
  const double phi = GetParam();
  const double tau = (1.0 + phi) / (1.0 - phi);
  constexpr std::size_t kReplicates = 24, kChains = 4;
  const std::size_t draws = phi > 0.95 ? 40000 : 10000;
  std::vector<double> estimates;
  for (std::size_t r = 0; r < kReplicates; ++r) {
    const auto d = testing::ar1("ar1", draws, kChains, phi, 1000 + r);
    const Estimate ess = ess_mean(d.matrix());
    ASSERT_TRUE(ess.ok()) << ess.reason;
    estimates.push_back(static_cast<double>(kChains * draws) / ess.value);
  }
  const double mean = std::accumulate(estimates.begin(), estimates.end(), 0.0) / kReplicates;
  double squares = 0.0;
  for (double e : estimates) squares += (e - mean) * (e - mean);
  const double standard_error = std::sqrt(squares / (kReplicates - 1) / kReplicates);
  const double z = (mean - tau) / standard_error;
  EXPECT_LT(std::abs(z), 4.0) << "phi " << phi << ": mean tau_hat " << mean << " vs " << tau
                              << " (se " << standard_error << ")";
  // And the estimator is not so noisy that the z-test is toothless: spread within 25% of tau.
  EXPECT_LT(standard_error * std::sqrt(double(kReplicates)), 0.25 * tau);
}

INSTANTIATE_TEST_SUITE_P(SeveralPhi, Ar1Tau, ::testing::Values(0.0, 0.5, 0.9, 0.99));

// Autocorrelation at lag t of a long AR(1) chain is phi^t. Bartlett's formula [from memory] gives
// var(r_t) ~ ((1 + phi^2)(1 - phi^2t)/(1 - phi^2) - 2t phi^2t) / n <= (1 + phi^2)/(1 - phi^2)/n,
// so 5 of these standard errors bound the check.
TEST(Autocovariance, Ar1AutocorrelationIsPhiToTheLag) {
  constexpr double kPhi = 0.8;
  constexpr std::size_t kDraws = 200000;
  const auto d = testing::ar1("ar1", kDraws, 1, kPhi, 77);
  const auto acov = autocovariance(d.matrix().chain(0));
  ASSERT_EQ(acov.size(), kDraws);
  const double bound =
      5.0 * std::sqrt((1.0 + kPhi * kPhi) / (1.0 - kPhi * kPhi) / static_cast<double>(kDraws));
  for (std::size_t t = 1; t <= 5; ++t) {
    EXPECT_NEAR(acov[t] / acov[0], std::pow(kPhi, double(t)), bound) << "lag " << t;
  }
}

// The FFT result equals the defining sum (1/n) sum_{i<n-t} y_i y_{i+t} (direct computation).
TEST(Autocovariance, FftEqualsDirectSum) {
  const auto d = testing::ar1("ar1", 777, 1, 0.6, 5);
  const auto x = d.matrix().chain(0);
  const auto acov = autocovariance(x);
  const double mean = std::accumulate(x.begin(), x.end(), 0.0) / double(x.size());
  for (std::size_t t : {0UL, 1UL, 2UL, 10UL, 100UL, 776UL}) {
    double sum = 0.0;
    for (std::size_t i = 0; i + t < x.size(); ++i) sum += (x[i] - mean) * (x[i + t] - mean);
    EXPECT_NEAR(acov[t], sum / double(x.size()), 1e-12 * acov[0]) << "lag " << t;
  }
}

TEST(Autocovariance, ConstantChainGivesZeros) {
  const std::vector<double> x(50, 3.25);
  for (double v : autocovariance(x)) EXPECT_EQ(v, 0.0);
  EXPECT_TRUE(autocovariance(std::vector<double>{}).empty());
}

}  // namespace
}  // namespace planmill::diagnose
