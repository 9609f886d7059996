// The exact target-law checks of target_law_test.cpp with four times the samples, over several
// seeds each (the exact law comes from enumerating every valid plan; the swap rule is
// Hukushima & Nemoto 1996, docs/tempering.md). Thresholds as in the self-test: p >= 1e-4 per case.
#include <gtest/gtest.h>

#include <cstdio>

#include "law_check.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

struct SlowCase {
  const char* name;
  KernelKind kind;
  std::vector<double> betas;
  bool tune;
};

test::LadderLawCase make_case(const SlowCase& s, std::uint64_t seed) {
  test::LadderLawCase c;
  c.graph = std::make_shared<const UnitGraph>(test::grid(4, 4));
  c.rules.cut_edges_weight = 1.0;
  c.kernel.kind = s.kind;
  if (s.kind == KernelKind::flip) {
    c.districts = 2;
    c.rules.population_tolerance = 0.125;
  } else {
    c.districts = 4;
    c.rules.population_tolerance = 0.0;
    c.kernel.gamma = 1.0;
    c.kernel.balanced_cut_bound = 1;  // exact: one balanced edge at most under exact equality
  }
  c.betas = s.betas;
  c.tune = s.tune;
  c.samples = 40000;
  c.seed = seed;
  return c;
}

class SlowTargetLaw : public ::testing::TestWithParam<std::tuple<std::size_t, std::uint64_t>> {};

const std::vector<SlowCase>& cases() {
  static const std::vector<SlowCase> all{
      {"flip, 2 rungs", KernelKind::flip, {1.0, 0.3}, false},
      {"flip, 4 rungs", KernelKind::flip, {1.0, 0.46, 0.22, 0.1}, false},
      {"flip, 6 rungs tuned", KernelKind::flip, {1.5, 1.4, 1.3, 1.2, 1.1, 0.0}, true},
      {"merge-split, 2 rungs", KernelKind::merge_split, {0.8, 0.2}, false},
      {"merge-split, 4 rungs", KernelKind::merge_split, {0.8, 0.5, 0.25, 0.0}, false},
  };
  return all;
}

TEST_P(SlowTargetLaw, MatchesTheExactLaw) {
  const auto [which, seed] = GetParam();
  const auto r = test::check_ladder_law(make_case(cases().at(which), seed));
  std::printf("  %s, seed %llu: TV %.4f (independent draws %.4f), p %.3g\n", cases()[which].name,
              static_cast<unsigned long long>(seed), r.total_variation, r.noise_total_variation,
              r.p_value);
  EXPECT_EQ(r.invalid, 0u);
  EXPECT_GE(r.p_value, kSelftestMinPValue);
  EXPECT_LE(r.total_variation, 2.0 * r.noise_total_variation);
}

INSTANTIATE_TEST_SUITE_P(Cases, SlowTargetLaw,
                         ::testing::Combine(::testing::Range<std::size_t>(0, 5),
                                            ::testing::Values(1u, 2u, 3u)));

}  // namespace
}  // namespace planmill
