// Kernels on plans at the edge of the input space, and the uniform cut-edge draw they share.
#include "planmill/moves/kernel.hpp"

#include <gtest/gtest.h>

#include <map>
#include <vector>

#include "../tree/chi_square.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

TEST(UniformCutEdge, APlanWithoutCutEdgesGivesNone) {
  const GraphHandle g = share_graph(test::grid(3, 3));
  const Plan plan(g, 1, std::vector<DistrictIndex>(9, 0));
  ASSERT_EQ(plan.cut_edge_count(), 0u);
  Rng rng = make_stream(7, 0);
  EXPECT_EQ(uniform_cut_edge(plan, rng), kNoEdge);
  EXPECT_EQ(uniform_cut_edge(plan, rng, 0), kNoEdge);
}

TEST(UniformCutEdge, EveryKernelSaysNoCutOnAOneDistrictPlan) {
  const GraphHandle g = share_graph(test::grid(3, 3));
  RuleSet rules;
  rules.population_tolerance = 0.5;
  for (const KernelKind kind : {KernelKind::recombination, KernelKind::merge_split, KernelKind::flip}) {
    ChainState state(Plan(g, 1, std::vector<DistrictIndex>(9, 0)), rules);
    KernelSettings settings;
    settings.kind = kind;
    const auto kernel = make_kernel(settings, *g, 1);
    kernel->reset(state);
    Rng rng = make_stream(7, 1);
    EXPECT_EQ(kernel->step(state, rng), StepResult::no_cut) << kernel_name(kind);
  }
}

// Counts of each cut edge over `draws` draws with the given miss bound, chi-square against equal
// counts (the statistic and tail from tests/tree/chi_square.hpp).
double cut_edge_p_value(const Plan& plan, std::size_t max_misses, std::size_t draws) {
  const UnitGraph& g = plan.graph();
  std::map<EdgeIndex, std::size_t> slot;
  for (EdgeIndex e = 0; e < g.edge_count(); ++e)
    if (plan.district_of(g.edge_first(e)) != plan.district_of(g.edge_second(e))) slot.emplace(e, slot.size());
  EXPECT_EQ(slot.size(), plan.cut_edge_count());
  std::vector<std::uint64_t> counts(slot.size(), 0);
  Rng rng = make_stream(2027, max_misses);
  for (std::size_t i = 0; i < draws; ++i) {
    const EdgeIndex e = uniform_cut_edge(plan, rng, max_misses);
    const auto it = slot.find(e);
    if (it == slot.end()) {
      ADD_FAILURE() << "edge " << e << " is not a cut edge";
      return 0.0;
    }
    ++counts[it->second];
  }
  return test::chi_square_uniform(counts).p_value;
}

TEST(UniformCutEdge, IsUniformOverCutEdgesWhetherByRejectionOrByTheBoundedScan) {
  // A 6x6 grid in 3 stripes: 12 cut edges of 60.
  const GraphHandle g = share_graph(test::grid(6, 6));
  const Plan plan(g, 3, test::stripe_assignment(6, 6, 3));
  ASSERT_EQ(plan.cut_edge_count(), 12u);
  // Default bound (rejection almost always), no misses allowed (scan only), and one miss (a
  // mixture of both); 20,000 draws each.
  for (const std::size_t misses : {g->edge_count(), std::size_t{0}, std::size_t{1}})
    EXPECT_GT(cut_edge_p_value(plan, misses, 20000), 1e-3) << "max_misses " << misses;
}

TEST(UniformCutEdge, DefaultDrawIsUniformWhenCutEdgesAreRare) {
  // A 2x30 ladder cut once in the middle: 2 cut edges of 88, so the bounded scan takes over in
  // about one draw in ten (e^-2).
  const GraphHandle g = share_graph(test::grid(2, 30));
  const Plan plan(g, 2, test::stripe_assignment(2, 30, 2));
  ASSERT_EQ(plan.cut_edge_count(), 2u);
  EXPECT_GT(cut_edge_p_value(plan, g->edge_count(), 20000), 1e-3);
}

}  // namespace
}  // namespace planmill
