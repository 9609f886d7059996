// The swap round on its own: the acceptance probability against the formula of
// Hukushima & Nemoto 1996 (docs/tempering.md), the always-accepted case, which pairs each round proposes,
// and a fixed use of the random stream.
#include "planmill/temper/swap.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <vector>

namespace planmill {
namespace {

TEST(SwapRound, LowerEnergyToTheColderRungIsAlwaysAccepted) {
  // Hukushima & Nemoto 1996: moving the lower energy to the larger beta is always accepted.
  const std::vector<double> betas{2.0, 1.0};
  Rng rng = make_stream(3, 0);
  for (int n = 0; n < 1000; ++n) {
    std::vector<double> energy{10.0, 4.0};
    std::vector<std::uint32_t> replica{0, 1};
    std::vector<std::uint8_t> accepted(1);
    ASSERT_EQ(swap_round({betas, 0}, energy, replica, accepted, rng), 1u);
    ASSERT_EQ(accepted[0], 1);
    EXPECT_EQ(replica, (std::vector<std::uint32_t>{1, 0}));
    EXPECT_EQ(energy, (std::vector<double>{4.0, 10.0}));
  }
}

TEST(SwapRound, AcceptanceFrequencyMatchesTheFormula) {
  // alpha = exp((b_0 - b_1)(E_0 - E_1)) = exp(0.5 * -1.4) = exp(-0.7) (Hukushima & Nemoto 1996).
  // n = 200,000 Bernoulli trials: sd = sqrt(p (1 - p) / n) ~ 0.0011; allow 5 sd.
  const std::vector<double> betas{1.0, 0.5};
  const double expected = std::exp(-0.7);
  Rng rng = make_stream(5, 0);
  constexpr int n = 200000;
  int accepted_count = 0;
  for (int i = 0; i < n; ++i) {
    std::vector<double> energy{1.0, 2.4};
    std::vector<std::uint32_t> replica{0, 1};
    std::vector<std::uint8_t> accepted(1);
    (void)swap_round({betas, 0}, energy, replica, accepted, rng);
    accepted_count += accepted[0];
  }
  const double sd = std::sqrt(expected * (1 - expected) / n);
  EXPECT_NEAR(static_cast<double>(accepted_count) / n, expected, 5 * sd);
  // The wrong sign accepts these always (its ratio is exp(+0.7) > 1).
  std::vector<double> energy{1.0, 2.4};
  std::vector<std::uint32_t> replica{0, 1};
  std::vector<std::uint8_t> accepted(1);
  (void)swap_round({betas, 0, true}, energy, replica, accepted, rng);
  EXPECT_EQ(accepted[0], 1);
}

TEST(SwapRound, EvenThenOddPairsAndOneUniformPerProposedPair) {
  const std::vector<double> betas{1.0, 0.8, 0.6, 0.4, 0.2};  // 4 pairs
  std::vector<double> energy(5, 0.0);  // equal energies: every proposed swap is accepted
  std::vector<std::uint32_t> replica{0, 1, 2, 3, 4};
  std::vector<std::uint8_t> accepted(4);
  Rng rng = make_stream(7, 0), copy = rng;
  EXPECT_EQ(swap_round({betas, 0}, energy, replica, accepted, rng), 2u);  // pairs (0,1), (2,3)
  EXPECT_EQ(accepted, (std::vector<std::uint8_t>{1, 0, 1, 0}));
  EXPECT_EQ(replica, (std::vector<std::uint32_t>{1, 0, 3, 2, 4}));
  EXPECT_EQ(swap_round({betas, 1}, energy, replica, accepted, rng), 2u);  // pairs (1,2), (3,4)
  EXPECT_EQ(accepted, (std::vector<std::uint8_t>{0, 1, 0, 1}));
  EXPECT_EQ(replica, (std::vector<std::uint32_t>{1, 3, 0, 4, 2}));
  // Four proposals, one uniform01 (two 32-bit draws) each.
  for (int i = 0; i < 4; ++i) (void)uniform01(copy);
  EXPECT_TRUE(rng == copy);
}

}  // namespace
}  // namespace planmill
