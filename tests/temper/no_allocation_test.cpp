// Hot-loop promise: once warmed up, Ladder::step (kernel steps, swap rounds, statistics, beta
// changes) allocates nothing. Counted by replacing the global operator new in this test program.
#include <gtest/gtest.h>

#include "count_allocations.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/temper/ladder.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

// A 4-rung ladder on a 6x6 grid with 3 districts.
struct Fixture {
  GraphHandle graph = share_graph(test::grid(6, 6));
  RuleSet rules;
  Fixture() {
    rules.population_tolerance = 0.2;
    rules.cut_edges_weight = 0.5;
  }
  Ladder ladder(KernelKind kind, double gamma) {
    Rng seed_rng = make_stream(4, 0);
    LadderSetup setup;
    setup.chain = ChainSetup{graph, rules, {}, 3, 0};
    setup.chain.kernel.kind = kind;
    setup.chain.kernel.gamma = gamma;
    setup.betas = geometric_betas(1.0, 0.1, 4);
    setup.swap_every = 1;
    return Ladder(setup, {random_seed_plan(graph, 3, rules, seed_rng)});
  }
};

class NoAllocation : public ::testing::TestWithParam<KernelKind> {};

TEST_P(NoAllocation, LadderStepsAfterWarmUp) {
  Fixture f;
  // gamma = 1: merge-split needs no tree counts (gamma != 1 is the test below).
  Ladder ladder = f.ladder(GetParam(), 1.0);
  ladder.run(5000);  // warm-up grows every buffer to its working size
  const std::size_t before = planmill::test::allocations();
  ladder.run(5000);
  EXPECT_EQ(planmill::test::allocations() - before, 0u);
  EXPECT_GT(ladder.statistics().swap_accepts[0], 0u);
}

TEST(NoAllocationTreeCounts, MergeSplitAtHalfGammaAfterWarmUp) {
  // gamma = 0.5: every proposed split counts the spanning trees of both new districts. The
  // warm-up must have met the largest district the chain reaches (a larger one later grows the
  // tree sampler's and the tree counter's buffers once, as promised).
  Fixture f;
  Ladder ladder = f.ladder(KernelKind::merge_split, 0.5);
  ladder.run(10000);
  const std::size_t before = planmill::test::allocations();
  ladder.run(5000);
  EXPECT_EQ(planmill::test::allocations() - before, 0u);
  std::uint64_t counted = 0;  // steps that reached the tree counts: accepted or rejected
  for (std::size_t i = 0; i < 4; ++i) {
    const auto& outcomes = ladder.replica(i).counters().outcomes;
    counted += outcomes[static_cast<std::size_t>(StepResult::accepted)] +
               outcomes[static_cast<std::size_t>(StepResult::rejected)];
  }
  EXPECT_GT(counted, 100u);
}

INSTANTIATE_TEST_SUITE_P(Kernels, NoAllocation,
                         ::testing::Values(KernelKind::flip, KernelKind::merge_split));

}  // namespace
}  // namespace planmill
