// Hot-loop promise: once warmed up, Ladder::step (kernel steps, swap rounds, statistics, beta
// changes) allocates nothing. Counted by replacing the global operator new in this test program.
#include <gtest/gtest.h>

#include <atomic>
#include <cstdlib>
#include <new>

#include "planmill/seed/seed_plan.hpp"
#include "planmill/temper/ladder.hpp"
#include "count_allocations.hpp"
#include "small_graphs.hpp"



namespace planmill {
namespace {

class NoAllocation : public ::testing::TestWithParam<KernelKind> {};

TEST_P(NoAllocation, LadderStepsAfterWarmUp) {
  const UnitGraph graph = test::grid(6, 6);
  RuleSet rules;
  rules.population_deviation = 0.2;
  rules.cut_edges_weight = 0.5;
  Rng seed_rng = make_stream(4, 0);
  LadderSetup setup;
  setup.chain = ChainSetup{&graph, rules, {}, 3, 0};
  setup.chain.kernel.kind = GetParam();
  // gamma = 1: merge-split needs no tree counts. (With gamma != 1 the tree counter allocates on
  // its own, a matter of the tree part, not of the ladder.)
  setup.chain.kernel.gamma = 1.0;
  setup.betas = geometric_betas(1.0, 0.1, 4);
  setup.swap_every = 1;
  Ladder ladder(setup, {random_seed_plan(graph, 3, rules, seed_rng)});
  ladder.run(5000);  // warm-up grows every buffer to its working size
  const std::size_t before = planmill::test::allocations();
  ladder.run(5000);
  EXPECT_EQ(planmill::test::allocations() - before, 0u);
  EXPECT_GT(ladder.statistics().swap_accepts[0], 0u);
}

INSTANTIATE_TEST_SUITE_P(Kernels, NoAllocation,
                         ::testing::Values(KernelKind::flip, KernelKind::merge_split));

}  // namespace
}  // namespace planmill
