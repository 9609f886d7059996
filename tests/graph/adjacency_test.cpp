// AdjacencyView: the view of every owner (map, region, plan-file adjacency) walks the same
// neighbour lists, and the one structural check refuses what is not a CSR adjacency.
#include "planmill/graph/adjacency.hpp"

#include <gtest/gtest.h>

#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/store/plan_codec.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/spanning_tree.hpp"
#include "small_graphs.hpp"

namespace planmill::test {
namespace {

// The 3 x 4 grid by hand: corners have 2 neighbours, other border units 3, inner units 4;
// 3 * 3 + 2 * 4 = 17 edges.
TEST(AdjacencyView, GridByHand) {
  const UnitGraph g = grid(3, 4);
  const AdjacencyView view = g.adjacency();
  ASSERT_EQ(view.vertex_count(), 12U);
  EXPECT_EQ(view.entry_count(), 2U * 17U);
  EXPECT_TRUE(view.valid_for(12));
  EXPECT_TRUE(view.has_edge_ids());
  EXPECT_EQ(view.max_degree(), 4U);
  const std::vector<std::uint32_t> degree = {2, 3, 3, 2, 3, 4, 4, 3, 2, 3, 3, 2};
  for (std::uint32_t u = 0; u < 12; ++u) EXPECT_EQ(view.degree(u), degree[u]) << u;
  // Unit 5 = (1, 1): up 1, left 4, right 6, down 9, in increasing order.
  const auto nb = view.neighbors(5);
  EXPECT_EQ(std::vector<std::uint32_t>(nb.begin(), nb.end()),
            (std::vector<std::uint32_t>{1, 4, 6, 9}));
  // Each edge id names the edge between the unit and that neighbour.
  for (std::uint32_t u = 0; u < 12; ++u) {
    const auto ends = view.neighbors(u);
    const auto edges = view.incident_edges(u);
    ASSERT_EQ(ends.size(), edges.size());
    for (std::size_t i = 0; i < ends.size(); ++i) {
      EXPECT_EQ(std::min(u, ends[i]), g.edge_first(edges[i]));
      EXPECT_EQ(std::max(u, ends[i]), g.edge_second(edges[i]));
    }
  }
}

// A region of every unit in map order and the plan file's copy walk exactly the map's lists.
TEST(AdjacencyView, OwnersAgree) {
  const UnitGraph g = grid(4, 5);
  std::vector<UnitIndex> all(g.unit_count());
  for (UnitIndex u = 0; u < all.size(); ++u) all[u] = u;
  Region region;
  region.build(g, all);
  const UnitAdjacency stored = unit_adjacency(g);
  for (const AdjacencyView view : {region.adjacency(), stored.view()}) {
    ASSERT_EQ(view.vertex_count(), g.unit_count());
    EXPECT_FALSE(view.has_edge_ids());
    for (UnitIndex u = 0; u < g.unit_count(); ++u) {
      const auto mine = view.neighbors(u), map = g.neighbors(u);
      EXPECT_TRUE(std::equal(mine.begin(), mine.end(), map.begin(), map.end())) << u;
    }
  }
}

// Wilson's algorithm on the map's view draws the same tree as on the region of the whole map,
// from the same stream.
TEST(AdjacencyView, WilsonOnTheMapMatchesTheRegion) {
  const UnitGraph g = grid(5, 5);
  std::vector<UnitIndex> all(g.unit_count());
  for (UnitIndex u = 0; u < all.size(); ++u) all[u] = u;
  Region region;
  region.build(g, all);
  SpanningTreeSampler on_region, on_map;
  Rng a = make_stream(3, 1), b = make_stream(3, 1);
  for (int draw = 0; draw < 20; ++draw) {
    on_region.sample(region, a, 7);
    on_map.sample(g.adjacency(), g.populations(), b, 7);
    const auto p = on_region.parents(), q = on_map.parents();
    ASSERT_TRUE(std::equal(p.begin(), p.end(), q.begin(), q.end())) << draw;
    const auto s = on_region.subtree_population(), t = on_map.subtree_population();
    ASSERT_TRUE(std::equal(s.begin(), s.end(), t.begin(), t.end())) << draw;
  }
  EXPECT_EQ(on_map.subtree_population()[7], 25);
}

TEST(AdjacencyView, StructureCheck) {
  std::vector<AdjacencyView::Offset> offsets = {0, 1, 2};
  std::vector<AdjacencyView::Vertex> targets = {1, 0};
  const std::vector<EdgeIndex> one_id = {0};
  EXPECT_TRUE(AdjacencyView(offsets, targets).valid_for(2));
  EXPECT_FALSE(AdjacencyView(offsets, targets).valid_for(3));            // wrong vertex count
  EXPECT_FALSE(AdjacencyView(offsets, targets, one_id).valid_for(2));    // ids not one per target
  EXPECT_FALSE(AdjacencyView().valid_for(0));                            // no offsets at all
  offsets = {1, 1, 2};
  EXPECT_FALSE(AdjacencyView(offsets, targets).valid_for(2));  // does not start at 0
  offsets = {0, 2, 1};
  EXPECT_FALSE(AdjacencyView(offsets, targets).valid_for(2));  // decreasing
  offsets = {0, 1, 1};
  EXPECT_FALSE(AdjacencyView(offsets, targets).valid_for(2));  // does not end at the targets
  offsets = {0, 1, 2};
  targets = {1, 2};
  EXPECT_FALSE(AdjacencyView(offsets, targets).valid_for(2));  // vertex 2 does not exist
}

}  // namespace
}  // namespace planmill::test
