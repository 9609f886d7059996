// Plan tallies, cut edges, contiguity and population deviation.
#include "planmill/plan/plan.hpp"

#include <gtest/gtest.h>

#include <cmath>

#include "planmill/base/random.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

// A 6x6 grid with every attribute that has a tally: counts, areas, edge lengths, perimeters.
UnitGraph rich_grid() {
  constexpr std::uint32_t rows = 6, cols = 6, n = rows * cols;
  UnitGraphBuilder b;
  for (std::uint32_t u = 0; u < n; ++u) (void)b.add_unit(std::to_string(u), 10 + (u * 7) % 13);
  std::vector<double> group(n), votes(n), area(n), perimeter(n, 4.0);
  for (std::uint32_t u = 0; u < n; ++u) {
    group[u] = 0.5 * (u % 5);
    votes[u] = 1.25 * (u % 3);
    area[u] = 1.0 + 0.1 * (u % 4);
  }
  b.add_count_column("group", group);
  b.add_count_column("votes", votes);
  b.set_groups({0});
  b.set_areas(area);
  b.set_perimeters(perimeter);
  for (const auto& [x, y] : test::grid_edges(rows, cols)) (void)b.add_edge(x, y, 0.5 + 0.25 * ((x + y) % 3));
  return std::move(b).build();
}

TEST(Plan, RandomMovesKeepTalliesEqualToARecount) {
  const GraphHandle g_handle = share_graph(rich_grid());
  const UnitGraph& g = *g_handle;
  constexpr std::size_t k = 4;
  Plan plan(g_handle, k, test::stripe_assignment(6, 6, k));
  ASSERT_TRUE(plan.tallies_consistent());
  Rng rng = make_stream(2024, 0);
  for (int step = 0; step < 2000; ++step) {
    const UnitIndex u = uniform_below(rng, static_cast<std::uint32_t>(g.unit_count()));
    const auto to = static_cast<DistrictIndex>(uniform_below(rng, k));
    plan.move(u, to);
    ASSERT_EQ(plan.district_of(u), to);
    if (step % 50 == 0) ASSERT_TRUE(plan.tallies_consistent()) << "after step " << step;
  }
  EXPECT_TRUE(plan.tallies_consistent());
  // A batch relabel through assign() as well.
  std::vector<UnitIndex> units;
  std::vector<DistrictIndex> to;
  for (UnitIndex u = 0; u < g.unit_count(); u += 3) {
    units.push_back(u);
    to.push_back(static_cast<DistrictIndex>((plan.district_of(u) + 1) % k));
  }
  plan.assign(units, to);
  EXPECT_TRUE(plan.tallies_consistent());
  std::int64_t total = 0;
  for (DistrictIndex d = 0; d < k; ++d) total += plan.population(d);
  EXPECT_EQ(total, g.total_population());
}

TEST(Plan, CutEdgesOfTheFourByFourGrid) {
  // Plain counting: a 4x4 grid cut into two halves has 4 cut edges, into four
  // 2x2 squares 8.
  const GraphHandle g_handle = share_graph(test::grid(4, 4));
  const UnitGraph& g = *g_handle;
  const Plan halves(g_handle, 2, test::stripe_assignment(4, 4, 2));
  EXPECT_EQ(halves.cut_edge_count(), 4U);
  std::vector<DistrictIndex> squares(16);
  const auto blocks = test::block_codes(4, 4, 2, 2);
  for (std::size_t u = 0; u < 16; ++u) squares[u] = static_cast<DistrictIndex>(blocks[u]);
  const Plan quarters(g_handle, 4, squares);
  EXPECT_EQ(quarters.cut_edge_count(), 8U);
  EXPECT_TRUE(quarters.all_connected());
}

TEST(Plan, Contiguity) {
  const GraphHandle g_handle = share_graph(test::grid(3, 3));
  const UnitGraph& g = *g_handle;
  // District 1 = the middle column: connected. Then the corners 0 and 8 in district 1: not.
  Plan plan(g_handle, 2, {0, 1, 0, 0, 1, 0, 0, 1, 0});
  EXPECT_TRUE(plan.is_connected(1));
  EXPECT_FALSE(plan.is_connected(0));  // left and right columns do not touch
  EXPECT_FALSE(plan.all_connected());
  Plan ring(g_handle, 2, {0, 0, 0, 0, 1, 0, 0, 0, 0});
  EXPECT_TRUE(ring.all_connected());  // a ring around the centre is connected
  ring.move(1, 1);
  ring.move(7, 1);  // column 1 now splits the ring into left and right
  EXPECT_TRUE(ring.is_connected(1));
  EXPECT_FALSE(ring.is_connected(0));
  // An empty district is not connected.
  Plan one(g_handle, 3, {0, 0, 0, 0, 1, 0, 0, 0, 0});
  EXPECT_FALSE(one.is_connected(2));
}

TEST(Plan, PiecesSayWhyADistrictIsNotContiguous) {
  // 3x3 grid with populations 1..9 (unit u has u + 1 people).
  test::GraphExtras x;
  x.population = {1, 2, 3, 4, 5, 6, 7, 8, 9};
  const GraphHandle g = share_graph(test::grid(3, 3, x));
  // District 0: the left column {0, 3, 6} (12 people) and the right one {2, 5, 8} (18 people).
  const Plan plan(g, 3, {0, 1, 0, 0, 1, 0, 0, 1, 0});
  const std::vector<DistrictPiece> pieces = plan.pieces(0);
  ASSERT_EQ(pieces.size(), 2U);
  EXPECT_EQ(pieces[0].units, 3U);
  EXPECT_EQ(pieces[0].population, 18);  // the largest by population first
  EXPECT_EQ(pieces[1].population, 12);
  ASSERT_EQ(plan.pieces(1).size(), 1U);  // the middle column: one piece of 15 people
  EXPECT_EQ(plan.pieces(1)[0].population, 15);
  EXPECT_TRUE(plan.pieces(2).empty());  // empty district: no piece
}

// Issue 11, item 17: the flip kernel's contiguity check starts next to the unit that left. Over
// random single-unit moves between connected districts it must answer as the full search does.
TEST(Plan, ContiguityWithoutTheUnitThatLeftAgreesWithTheFullSearch) {
  const GraphHandle g_handle = share_graph(test::grid(8, 8));
  const UnitGraph& g = *g_handle;
  Plan plan(g_handle, 4, test::stripe_assignment(8, 8, 4));
  ASSERT_TRUE(plan.all_connected());
  Rng rng = make_stream(2028, 0);
  std::size_t split = 0, kept = 0;
  for (int i = 0; i < 20000; ++i) {
    const UnitIndex u = uniform_below(rng, static_cast<std::uint32_t>(g.unit_count()));
    const auto neighbours = g.neighbors(u);
    const UnitIndex w = neighbours[uniform_below(rng, static_cast<std::uint32_t>(neighbours.size()))];
    const DistrictIndex from = plan.district_of(u), to = plan.district_of(w);
    if (from == to) continue;
    plan.move(u, to);
    const bool fast = plan.is_connected_without(from, u);
    ASSERT_EQ(fast, plan.is_connected(from)) << "step " << i << ", unit " << u;
    if (fast) {
      ++kept;
    } else {
      ++split;
      plan.move(u, from);  // keep every district connected, as a chain does
    }
  }
  EXPECT_GT(split, 100u);  // both answers were exercised
  EXPECT_GT(kept, 100u);
  // The last unit of a district leaves: the district is empty, so not connected.
  Plan pair(share_graph(test::grid(1, 3)), 2, {0, 1, 1});
  pair.move(0, 1);
  EXPECT_FALSE(pair.is_connected_without(0, 0));
}

TEST(Plan, PopulationDeviationWorkedExample) {
  // Plain arithmetic: ideal 100,000, largest 102,000, smallest 99,000 -> overall range 3%;
  // the largest absolute deviation is 2%.
  const GraphHandle g_handle = share_graph(test::graph_from_edges(3, test::path_edges(3), {102000, 99000, 99000}));
  const UnitGraph& g = *g_handle;
  const Plan plan(g_handle, 3, {0, 1, 2});
  EXPECT_DOUBLE_EQ(plan.ideal_population(), 100000.0);
  EXPECT_NEAR(plan.max_population_deviation(), 0.02, 1e-15);
  double high = -1.0, low = 1.0;
  for (DistrictIndex d = 0; d < 3; ++d) {
    const double dev = (static_cast<double>(plan.population(d)) - plan.ideal_population()) / plan.ideal_population();
    high = std::max(high, dev);
    low = std::min(low, dev);
  }
  EXPECT_NEAR(high - low, 0.03, 1e-15);
}

}  // namespace
}  // namespace planmill
