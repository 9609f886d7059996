// A chain is a pure function of (run seed, chain index, start plan): the same inputs give the same
// plans, a snapshot resumes exactly, and different chain indices give different streams.
#include <gtest/gtest.h>

#include "planmill/chain/chain.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

struct Fixture {
  GraphHandle graph = share_graph(test::grid(8, 8));
  RuleSet rules;
  Fixture() { rules.population_tolerance = 0.1; }
  ChainSetup setup(KernelKind kind, std::uint64_t index) {
    ChainSetup s{graph, rules, {}, 99, index};
    s.kernel.kind = kind;
    s.kernel.beta = 0.3;
    return s;
  }
  Plan start() {
    Rng rng = make_stream(5, 0);
    return random_seed_plan(graph, 4, rules, rng);
  }
};

class ChainKinds : public ::testing::TestWithParam<KernelKind> {};

TEST_P(ChainKinds, SnapshotResumesExactly) {
  Fixture f;
  f.rules.cut_edges_weight = 0.2;
  Chain original(f.setup(GetParam(), 3), f.start());
  for (int i = 0; i < 300; ++i) original.step();
  const std::string snapshot = original.save();
  for (int i = 0; i < 300; ++i) original.step();

  Chain resumed(f.setup(GetParam(), 3), f.start());
  resumed.restore(snapshot);
  for (int i = 0; i < 300; ++i) resumed.step();
  EXPECT_TRUE(resumed.state().plan == original.state().plan);
  EXPECT_EQ(resumed.counters().steps, 600u);
  EXPECT_EQ(resumed.counters().outcomes, original.counters().outcomes);
  EXPECT_EQ(resumed.save(), original.save());
  EXPECT_TRUE(resumed.state().plan.tallies_consistent());
}

TEST_P(ChainKinds, EveryRecordedPlanIsValid) {
  Fixture f;
  Chain chain(f.setup(GetParam(), 0), f.start());
  const RuleTracker bounds(chain.state().plan, f.rules);
  for (int i = 0; i < 500; ++i) {
    chain.step();
    const Plan& plan = chain.state().plan;
    ASSERT_TRUE(plan.all_connected());
    for (DistrictIndex d = 0; d < plan.district_count(); ++d) {
      ASSERT_GE(plan.population(d), bounds.population_min());
      ASSERT_LE(plan.population(d), bounds.population_max());
    }
  }
  EXPECT_TRUE(chain.state().plan.tallies_consistent());
  EXPECT_GT(chain.counters().outcomes[0], 0u) << "no step was ever accepted";
}

INSTANTIATE_TEST_SUITE_P(Kernels, ChainKinds,
                         ::testing::Values(KernelKind::recombination, KernelKind::merge_split, KernelKind::flip));

TEST(Chain, DistinctChainIndicesGiveDistinctStreams) {
  Fixture f;
  Chain a(f.setup(KernelKind::recombination, 0), f.start());
  Chain b(f.setup(KernelKind::recombination, 1), f.start());
  for (int i = 0; i < 50; ++i) {
    a.step();
    b.step();
  }
  EXPECT_FALSE(a.state().plan == b.state().plan);
}

TEST(Chain, RejectsASnapshotOfAnotherMap) {
  Fixture f;
  Chain chain(f.setup(KernelKind::flip, 0), f.start());
  const GraphHandle other = share_graph(test::grid(4, 4));
  RuleSet rules;
  rules.population_tolerance = 0.5;
  Rng rng = make_stream(1, 1);
  Chain small({other, rules, {}, 1, 0}, random_seed_plan(other, 4, rules, rng));
  EXPECT_THROW(chain.restore(small.save()), std::invalid_argument);
  EXPECT_THROW(chain.restore("nonsense"), std::invalid_argument);
}

}  // namespace
}  // namespace planmill
