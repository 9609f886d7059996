// The target rung of a ladder samples exactly the target law: its empirical law on small maps is
// compared with the exact law from enumerating every valid plan (exact by construction; the
// swap rule is Hukushima & Nemoto, J. Phys. Soc. Jpn. 65 (1996) 1604).
// Thresholds are the self-test's: chi-square p >= 1e-4; and the TV distance at most twice what
// independent draws from the exact law would show. A ladder with the wrong swap sign must fail.
#include <gtest/gtest.h>

#include <cstdio>

#include "law_check.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

// Flip on the 4x4 grid into two districts of 7-9 units, energy = cut edges (the map
// docs/kernels.md uses for the flip kernel's check).
test::LadderLawCase flip_case(std::vector<double> betas) {
  test::LadderLawCase c;
  c.graph = std::make_shared<const UnitGraph>(test::grid(4, 4));
  c.districts = 2;
  c.rules.population_tolerance = 0.125;
  c.rules.cut_edges_weight = 1.0;
  c.kernel.kind = KernelKind::flip;
  c.betas = std::move(betas);
  return c;
}

// Merge-split on the 4x4 grid into four districts of 4 with gamma = 1: target
// prod tau(P_i) exp(-b_0 * cut edges). Exact equality: at most one balanced edge, M = 1 is exact.
test::LadderLawCase merge_split_case(std::vector<double> betas) {
  test::LadderLawCase c;
  c.graph = std::make_shared<const UnitGraph>(test::grid(4, 4));
  c.districts = 4;
  c.rules.population_tolerance = 0.0;
  c.rules.cut_edges_weight = 1.0;
  c.kernel.kind = KernelKind::merge_split;
  c.kernel.gamma = 1.0;
  c.kernel.balanced_cut_bound = 1;
  c.betas = std::move(betas);
  return c;
}

void report(const test::LadderLawResult& r) {
  std::printf(
      "  %zu plans, thin %llu: TV %.4f (independent draws: %.4f), p %.3g, lowest swap acceptance "
      "%.2f\n",
      r.valid_plans, static_cast<unsigned long long>(r.thin), r.total_variation,
      r.noise_total_variation, r.p_value, r.lowest_pair_acceptance);
}

void expect_pass(const test::LadderLawResult& r) {
  report(r);
  EXPECT_EQ(r.invalid, 0u);
  EXPECT_GE(r.p_value, kSelftestMinPValue) << "TV " << r.total_variation << " (noise "
                                           << r.noise_total_variation << "), thin " << r.thin;
  EXPECT_LE(r.total_variation, 2.0 * r.noise_total_variation) << "p " << r.p_value;
  // Swaps must really happen, or the check says nothing about them.
  EXPECT_GT(r.lowest_pair_acceptance, 0.05);
}

TEST(TargetLaw, FlipLadderOfTwoRungs) {
  expect_pass(test::check_ladder_law(flip_case({1.0, 0.3})));
}

TEST(TargetLaw, FlipLadderOfFourRungs) {
  expect_pass(test::check_ladder_law(flip_case(geometric_betas(1.0, 0.1, 4))));
}

TEST(TargetLaw, MergeSplitLadderOfTwoRungs) {
  expect_pass(test::check_ladder_law(merge_split_case({0.8, 0.2})));
}

TEST(TargetLaw, MergeSplitLadderOfFourRungs) {
  expect_pass(test::check_ladder_law(merge_split_case({0.8, 0.5, 0.25, 0.0})));
}

TEST(TargetLaw, TunedFlipLadderOfFourRungs) {
  // Tuned during burn-in from a badly spaced start, then frozen: the samples still follow the law.
  auto c = flip_case({1.0, 0.95, 0.9, 0.0});
  c.tune = true;
  expect_pass(test::check_ladder_law(c));
}

// The same checks with exp(-(b_r - b_{r+1})(E_r - E_{r+1})) in place of the right ratio: the
// target rung then collects high-energy plans, and the check must turn red.
TEST(TargetLawPower, FlipLadderWithTheWrongSwapSignFails) {
  auto c = flip_case(geometric_betas(1.0, 0.1, 4));
  c.wrong_swap_sign = true;
  const auto r = test::check_ladder_law(c);
  report(r);
  EXPECT_LT(r.p_value, kSelftestMinPValue) << "TV " << r.total_variation;
  EXPECT_GT(r.total_variation, 2.0 * r.noise_total_variation);
}

TEST(TargetLawPower, MergeSplitLadderWithTheWrongSwapSignFails) {
  auto c = merge_split_case({0.8, 0.2});
  c.wrong_swap_sign = true;
  const auto r = test::check_ladder_law(c);
  report(r);
  EXPECT_LT(r.p_value, kSelftestMinPValue) << "TV " << r.total_variation;
  EXPECT_GT(r.total_variation, 2.0 * r.noise_total_variation);
}

}  // namespace
}  // namespace planmill
