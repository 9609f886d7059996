// The ε-outlier test (compare/outlier_test.hpp): its shares and bounds on a hand-worked trajectory,
// and the theorem it rests on checked as a property on chains with a known stationary law:
// Chikina, Frieze and Pegden, "Assessing significance in a Markov chain without mixing", PNAS
// 114(11), 2017, Theorem 1.1 (statement quoted from memory: for a reversible chain with X0 ~ π,
// P(X0 is an ε-outlier among X0..Xk) ≤ √(2ε), an ε-outlier having at most ε(k+1) of the Xi,
// X0 included, with score ≤ its own).
#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>
#include <limits>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/compare/outlier_test.hpp"
#include "planmill/selftest/selftest.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

using compare::OutlierShares;
using compare::OutlierTail;

TEST(EpsilonOutlier, HandWorkedTrajectory) {
  // Worked by hand: X0 = 1 and the walk 1, 2, ..., 49 (49 states after X0, 50 in all). At or below
  // 1: X0 and the tie, 2 of 50, eps_low = 0.04 and sqrt(2 * 0.04) = 0.28284...; at or above: all,
  // eps_high = 1, bound 1; two-sided 2 * sqrt(0.08) = 0.56569...
  std::vector<double> walk;
  for (int i = 1; i <= 49; ++i) walk.push_back(i);
  const OutlierShares s = compare::outlier_shares(1.0, walk);
  EXPECT_EQ(s.states, 50u);
  EXPECT_DOUBLE_EQ(s.low, 0.04);
  EXPECT_DOUBLE_EQ(s.high, 1.0);
  EXPECT_NEAR(compare::chain_p_bound(s, OutlierTail::low), 0.282842712474619, 1e-15);
  EXPECT_DOUBLE_EQ(compare::chain_p_bound(s, OutlierTail::high), 1.0);
  EXPECT_NEAR(compare::chain_p_bound(s, OutlierTail::two_sided), 0.565685424949238, 1e-15);
  // Without the tie: X0 = 0.5 alone at the bottom, eps_low = 1/50, bound sqrt(0.04) = 0.2.
  EXPECT_NEAR(compare::chain_p_bound(compare::outlier_shares(0.5, walk), OutlierTail::low), 0.2, 1e-15);
  // A NaN draw counts against X0 in both tails: X0 = 3 among {NaN, 1, 5}: low {X0, NaN, 1} = 3/4,
  // high {X0, NaN, 5} = 3/4.
  const double nan = std::numeric_limits<double>::quiet_NaN();
  const std::vector<double> with_nan{nan, 1.0, 5.0};
  const OutlierShares n = compare::outlier_shares(3.0, with_nan);
  EXPECT_DOUBLE_EQ(n.low, 0.75);
  EXPECT_DOUBLE_EQ(n.high, 0.75);
  EXPECT_TRUE(std::isnan(compare::outlier_shares(nan, walk).low));
  EXPECT_TRUE(std::isnan(compare::chain_p_bound(compare::outlier_shares(nan, walk), OutlierTail::two_sided)));
  // Bonferroni over chains, capped at 1: 3 x 0.2 = 0.6; 2 x 0.6 -> 1.
  EXPECT_DOUBLE_EQ(compare::combine_chains(std::vector<double>{0.5, 0.2, 0.9}), 0.6000000000000001);
  EXPECT_DOUBLE_EQ(compare::combine_chains(std::vector<double>{0.6, 0.7}), 1.0);
}

TEST(EpsilonOutlier, DeclaredTails) {
  EXPECT_EQ(compare::parse_declared("compactness.cut_edges", "j").tail, OutlierTail::two_sided);
  const auto low = compare::parse_declared("election.gov.efficiency_gap:low", "j");
  EXPECT_EQ(low.name, "election.gov.efficiency_gap");
  EXPECT_EQ(low.tail, OutlierTail::low);
  EXPECT_EQ(compare::parse_declared("energy:high", "j").tail, OutlierTail::high);
  EXPECT_THROW((void)compare::parse_declared("energy:up", "j"), std::exception);
}

// How often the events of the theorem happen over many trajectories started from π.
struct Frequencies {
  std::vector<double> eps;                        // thresholds e
  std::vector<std::size_t> low, high, wrong_low;  // runs with eps_low <= e, eps_high <= e, and
                                                  // a wrong count (ties in favour of X0) <= e
  std::vector<double> p_levels{0.05, 0.1, 0.2, 0.5};
  std::vector<std::size_t> two_sided;  // runs with the two-sided bound <= each level
  std::size_t runs = 0;
  void add(const std::vector<double>& x) {  // x[0] = X0
    const std::span<const double> after(x.data() + 1, x.size() - 1);
    const OutlierShares s = compare::outlier_shares(x[0], after);
    std::size_t strictly_below = 1;
    for (const double v : after) strictly_below += v < x[0] ? 1 : 0;
    const double wrong = static_cast<double>(strictly_below) / static_cast<double>(x.size());
    for (std::size_t i = 0; i < eps.size(); ++i) {
      low[i] += s.low <= eps[i] ? 1 : 0;
      high[i] += s.high <= eps[i] ? 1 : 0;
      wrong_low[i] += wrong <= eps[i] ? 1 : 0;
    }
    const double p = compare::chain_p_bound(s, OutlierTail::two_sided);
    for (std::size_t i = 0; i < p_levels.size(); ++i) two_sided[i] += p <= p_levels[i] ? 1 : 0;
    ++runs;
  }
  explicit Frequencies(std::size_t states) {
    for (std::size_t j = 1; j <= states; j *= 2) eps.push_back(static_cast<double>(j) / static_cast<double>(states));
    low.assign(eps.size(), 0);
    high.assign(eps.size(), 0);
    wrong_low.assign(eps.size(), 0);
    two_sided.assign(p_levels.size(), 0);
  }
  // A stated Monte Carlo margin: 4 binomial standard errors at the bound itself.
  [[nodiscard]] double margin(double bound) const {
    return 4.0 * std::sqrt(std::min(bound, 1.0) * (1.0 - std::min(bound, 1.0)) / static_cast<double>(runs));
  }
  // Largest frequency / bound seen, to show how close the bound comes.
  void expect_within_bound(const char* what, double& tightest) const {
    for (std::size_t i = 0; i < eps.size(); ++i) {
      const double bound = std::sqrt(2.0 * eps[i]), n = static_cast<double>(runs);
      EXPECT_LE(low[i] / n, bound + margin(bound)) << what << " low tail, eps " << eps[i];
      EXPECT_LE(high[i] / n, bound + margin(bound)) << what << " high tail, eps " << eps[i];
      if (bound < 1.0) tightest = std::max({tightest, low[i] / n / bound, high[i] / n / bound});
    }
    for (std::size_t i = 0; i < p_levels.size(); ++i)
      EXPECT_LE(two_sided[i] / static_cast<double>(runs), p_levels[i] + margin(p_levels[i]))
          << what << " two-sided p <= " << p_levels[i];
  }
};

TEST(EpsilonOutlierTheorem, LazyWalkOnAPathStartedFromItsUniformLaw) {
  // A lazy walk on 8 states in a row: hold with 1/2, else one step left or right (held at the
  // ends). Its transition matrix is symmetric, so it is reversible with respect to the uniform law.
  // A walk is close to the case the paper shows the sqrt is needed for (its outliers ~ sqrt(eps)).
  constexpr std::uint32_t n = 8;
  constexpr std::size_t steps = 400, runs = 20000;
  Frequencies f(steps + 1);
  Rng rng = make_stream(11, 0);
  std::vector<double> x(steps + 1);
  for (std::size_t r = 0; r < runs; ++r) {
    std::uint32_t at = uniform_below(rng, n);  // X0 ~ pi
    x[0] = at;
    for (std::size_t t = 1; t <= steps; ++t) {
      const std::uint32_t move = uniform_below(rng, 4);  // 0, 1: hold; 2: left; 3: right
      if (move == 2 && at > 0) --at;
      if (move == 3 && at + 1 < n) ++at;
      x[t] = at;
    }
    f.add(x);
  }
  double tightest = 0.0;
  f.expect_within_bound("lazy walk", tightest);
  // The check has teeth: counting ties in X0's favour (strictly below, plus X0) breaks the bound
  // here, at the smallest eps, because X0 = 0 (probability 1/8) then always has eps = 1/(k+1).
  const double smallest = std::sqrt(2.0 * f.eps[0]);
  EXPECT_GT(f.wrong_low[0] / static_cast<double>(runs), smallest + f.margin(smallest));
  std::printf("lazy walk: largest frequency / sqrt(2 eps) = %.3f; ties in X0's favour at eps = 1/%zu: %.3f > %.3f\n",
              tightest, steps + 1, f.wrong_low[0] / static_cast<double>(runs), smallest);
}

// X0 ~ the exact target (from the self-test's enumeration), then the kernel's own chain.
void kernel_property(SelftestCase c, std::size_t steps, std::size_t runs, const char* what) {
  c.samples = 1;
  const SelftestResult exact = run_selftest(c);
  ASSERT_GT(exact.plans.size(), 10u);
  std::vector<double> cumulative;
  double total = 0.0;
  for (const auto& p : exact.plans) cumulative.push_back(total += p.exact);
  ASSERT_NEAR(total, 1.0, 1e-9);
  Frequencies f(steps + 1);
  Rng rng = make_stream(12, 0);
  std::vector<double> x(steps + 1);
  for (std::size_t r = 0; r < runs; ++r) {
    const double u = uniform01(rng) * total;
    std::size_t pick = 0;
    while (pick + 1 < cumulative.size() && cumulative[pick] <= u) ++pick;
    std::vector<DistrictIndex> labels;
    for (const char ch : exact.plans[pick].plan) labels.push_back(static_cast<DistrictIndex>(ch - 'a'));
    Chain chain({c.graph, c.rules, c.kernel, 13, r}, Plan(c.graph, c.districts, labels));
    x[0] = static_cast<double>(chain.state().plan.cut_edge_count());
    for (std::size_t t = 1; t <= steps; ++t) {
      (void)chain.step();
      x[t] = static_cast<double>(chain.state().plan.cut_edge_count());
    }
    f.add(x);
  }
  double tightest = 0.0;
  f.expect_within_bound(what, tightest);
  std::printf("%s: largest frequency / sqrt(2 eps) = %.3f\n", what, tightest);
}

TEST(EpsilonOutlierTheorem, MergeSplitOnTheFourByFourGrid) {
  // 4x4 grid into four of 4 (117 plans, docs/kernels.md "Check values"), pi ~ exp(-0.5 cut).
  SelftestCase c;
  c.name = "4x4 into 4";
  c.graph = std::make_shared<const UnitGraph>(test::grid(4, 4));
  c.districts = 4;
  c.rules.population_tolerance = 0.0;
  c.rules.cut_edges_weight = 0.5;
  c.kernel.kind = KernelKind::merge_split;
  c.kernel.beta = 1.0;
  c.kernel.balanced_cut_bound = 1;  // exact equality on unit populations: one balanced edge at most
  kernel_property(c, 60, 3000, "merge-split");
}

TEST(EpsilonOutlierTheorem, FlipOnTheFourByFourGrid) {
  // 4x4 grid into two within 12.5% (the self-test's flip case), pi ~ exp(-0.5 cut).
  SelftestCase c;
  c.name = "4x4 into 2";
  c.graph = std::make_shared<const UnitGraph>(test::grid(4, 4));
  c.districts = 2;
  c.rules.population_tolerance = 0.125;
  c.rules.cut_edges_weight = 0.5;
  c.kernel.kind = KernelKind::flip;
  c.kernel.beta = 1.0;
  kernel_property(c, 100, 3000, "flip");
}

}  // namespace
}  // namespace planmill
