// The root sample(region, rng) chooses (SpanningTreeSampler::chosen_root) leaves the tree uniform:
// exact tree counts of small irregular graphs, then the frequency of every tree against uniform
// by chi-square, on graphs where the chosen root is not local 0; and the rule itself.
#include <gtest/gtest.h>

#include <cmath>
#include <cstdint>
#include <string>
#include <vector>

#include "chi_square.hpp"
#include "tree_catalog.hpp"
#include "planmill/base/random.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/spanning_tree.hpp"
#include "planmill/tree/tree_count.hpp"
#include "small_graphs.hpp"

namespace planmill::test {
namespace {

constexpr double kPValueThreshold = 1e-4;  // seeds are fixed: a failure is a bug, not bad luck

struct Case {
  std::string name;
  std::uint32_t units;
  EdgeList edges;
  std::vector<UnitIndex> order;  // local order of the region (local i = order[i])
  std::size_t trees;             // known spanning-tree count
};

std::vector<Case> cases() {
  return {
      // Cayley's formula n^(n-2): 16 (OEIS A000272). All degrees equal: the root is local 0.
      {"K4", 4, complete_edges(4), {2, 0, 3, 1}, 16},
      // Ladder 2 x 3: 15 (OEIS A001353, 1, 4, 15, 56, ...; from memory, and Kirchhoff below).
      {"grid2x3", 6, grid_edges(2, 3), {0, 1, 2, 3, 4, 5}, 15},
      // Wheel, hub and a 4-cycle: 45 (OEIS A004146, L(2n) - 2 with Lucas L(8) = 47; from memory),
      // hub last in local order so the chosen root (the hub) is not local 0.
      {"wheel4_hub_last", 5, wheel_edges(4), {1, 2, 3, 4, 0}, 45},
      // Triangle and chorded 4-cycle sharing unit 2, pendant 6: 3 x 8 = 24 (small_graphs.hpp).
      {"triangle_square_pendant", 7, triangle_square_pendant_edges(), {0, 1, 2, 3, 4, 5, 6}, 24},
      // Two squares, a triangle and a tail (cut vertex and bridge): counted by Kirchhoff below.
      {"two_squares_tail", 9, two_squares_tail_edges(), {7, 6, 8, 0, 1, 2, 3, 4, 5}, 0},
  };
}

TEST(ChosenRoot, TreeFrequenciesAreUniformOnSmallIrregularGraphs) {
  std::uint64_t seed = 1;
  for (const Case& c : cases()) {
    SCOPED_TRACE(c.name);
    const UnitGraph g = graph_from_edges(c.units, c.edges);
    Region region;
    region.build(g, c.order);
    const TreeCatalog catalog(region);
    // The brute-force catalogue against the matrix-tree theorem (Kirchhoff 1847) and the count
    // named above.
    const double kirchhoff = std::exp(log_spanning_tree_count(region));
    EXPECT_NEAR(static_cast<double>(catalog.tree_count()), kirchhoff, 1e-6 * kirchhoff);
    if (c.trees != 0) EXPECT_EQ(catalog.tree_count(), c.trees);

    const std::uint32_t root = SpanningTreeSampler::chosen_root(region.adjacency());
    SpanningTreeSampler sampler;
    Rng rng = make_stream(seed++, 0);
    std::vector<std::uint64_t> counts(catalog.tree_count(), 0);
    const std::size_t draws = 2000 * catalog.tree_count();
    for (std::size_t i = 0; i < draws; ++i) {
      sampler.sample(region, rng);
      ASSERT_EQ(sampler.root(), root);
      ++counts[catalog.index_of(sampler.parents())];
    }
    const ChiSquareResult fit = chi_square_uniform(counts);
    EXPECT_GT(fit.p_value, kPValueThreshold) << "X2=" << fit.statistic << " df=" << fit.df;
    RecordProperty("p_value_" + c.name, std::to_string(fit.p_value));
  }
}

TEST(ChosenRoot, HighestDegreeAmongLocalZeroAndItsNeighbours) {
  Region region;
  // Wheel with the hub last: local 0 is a rim unit (degree 3) next to the hub (degree 4).
  const UnitGraph wheel = graph_from_edges(5, wheel_edges(4));
  const std::vector<UnitIndex> hub_last = {1, 2, 3, 4, 0};
  region.build(wheel, hub_last);
  EXPECT_EQ(SpanningTreeSampler::chosen_root(region.adjacency()), 4U);
  // Triangle-square-pendant in map order: local 0 (degree 2) sees 1 (degree 2) and 2 (degree 4).
  const UnitGraph tsp = graph_from_edges(7, triangle_square_pendant_edges());
  const std::vector<UnitIndex> all7 = {0, 1, 2, 3, 4, 5, 6};
  region.build(tsp, all7);
  EXPECT_EQ(SpanningTreeSampler::chosen_root(region.adjacency()), 2U);
  // Ties go to the first in local order: on a 3 x 3 grid from the corner, units 1 and 3 (degree 3).
  const UnitGraph grid3 = graph_from_edges(9, grid_edges(3, 3));
  const std::vector<UnitIndex> all9 = {0, 1, 2, 3, 4, 5, 6, 7, 8};
  region.build(grid3, all9);
  EXPECT_EQ(SpanningTreeSampler::chosen_root(region.adjacency()), 1U);
  // A single unit roots itself.
  const std::vector<UnitIndex> one = {4};
  region.build(grid3, one);
  EXPECT_EQ(SpanningTreeSampler::chosen_root(region.adjacency()), 0U);
}

// A region grown from a cut edge is proved connected and skips the check; one grown from two
// seeds that are not neighbours is not, and still gets it.
TEST(ChosenRoot, RegionsGrownFromJoinedSeedsAreKnownConnected) {
  const GraphHandle g = share_graph(graph_from_edges(6, path_edges(6)));
  // Districts: 0 = {0, 1}, 1 = {2, 3}, 2 = {4, 5}.
  const Plan plan(g, 3, std::vector<DistrictIndex>{0, 0, 1, 1, 2, 2});
  Region region;
  region.build_from_seeds(plan, 1, 2);
  EXPECT_TRUE(region.known_connected());
  region.build_from_seeds(plan, 3, 3);
  EXPECT_TRUE(region.known_connected());
  region.build_from_seeds(plan, 0, 5);  // districts 0 and 2 do not meet
  EXPECT_FALSE(region.known_connected());
  SpanningTreeSampler sampler;
  Rng rng = make_stream(3, 0);
  EXPECT_THROW(sampler.sample(region, rng), std::invalid_argument);
  region.build(plan, 0, 1);
  EXPECT_FALSE(region.known_connected());
  sampler.sample(region, rng);
  EXPECT_EQ(sampler.size(), 4U);
}

}  // namespace
}  // namespace planmill::test
