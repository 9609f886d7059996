// Exact plan enumeration: published counts (OEIS) and an independent brute force.
#include "planmill/enumerate/enumerate.hpp"

#include <gtest/gtest.h>

#include <set>
#include <vector>

#include "brute_force.hpp"
#include "planmill/plan/plan.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

using test::EdgeList;

std::size_t grid_pieces(std::uint32_t n) {
  const GraphHandle g_handle = share_graph(test::grid(n, n));
  const UnitGraph& g = *g_handle;
  return count_plans(g, n, n, n);
}

// OEIS A172477: ways to cut an n x n grid into n connected pieces of n cells: 1, 2, 10, 117,
// 4006 (n = 6 is in enumerate_slow_test.cpp).
TEST(Enumerate, GridIntoEqualPiecesMatchesOeisA172477) {
  EXPECT_EQ(grid_pieces(1), 1U);
  EXPECT_EQ(grid_pieces(2), 2U);
  EXPECT_EQ(grid_pieces(3), 10U);
  EXPECT_EQ(grid_pieces(4), 117U);
  EXPECT_EQ(grid_pieces(5), 4006U);
}

// 4x4 into 2 pieces of 8: 70 (C(16,8) = 12870 halves, of which 70 are two connected pieces; checked by the brute force below too).
TEST(Enumerate, FourByFourIntoTwoHalves) {
  const GraphHandle g_handle = share_graph(test::grid(4, 4));
  const UnitGraph& g = *g_handle;
  EXPECT_EQ(count_plans(g, 2, 8, 8), 70U);
}

// 4x4 into 8 pieces of 2 are the domino tilings of the 4x4 board: 36 (OEIS A004003).
TEST(Enumerate, FourByFourIntoDominoes) {
  const GraphHandle g_handle = share_graph(test::grid(4, 4));
  const UnitGraph& g = *g_handle;
  EXPECT_EQ(count_plans(g, 8, 2, 2), 36U);
  // 2 x n boards have Fibonacci many domino tilings (OEIS A000045): 2x6 -> 13 [from memory].
  const UnitGraph ladder = test::grid(2, 6);
  EXPECT_EQ(count_plans(ladder, 6, 2, 2), 13U);
}

// Every visited plan is canonical, distinct, connected and within bounds.
TEST(Enumerate, VisitedPlansAreCanonicalValidAndDistinct) {
  const GraphHandle g_handle = share_graph(test::grid(4, 4));
  const UnitGraph& g = *g_handle;
  std::set<std::vector<DistrictIndex>> seen;
  for_each_plan(g, 4, 3, 5, [&](std::span<const DistrictIndex> a) {
    std::vector<DistrictIndex> v(a.begin(), a.end());
    EXPECT_EQ(v, test::canonical(v, 4));
    EXPECT_TRUE(seen.insert(v).second);
    Plan plan(g_handle, 4, v);
    EXPECT_TRUE(plan.all_connected());
    for (DistrictIndex d = 0; d < 4; ++d) {
      EXPECT_GE(plan.population(d), 3);
      EXPECT_LE(plan.population(d), 5);
    }
  });
  EXPECT_GT(seen.size(), 117U);  // looser bounds than 4 x 4, so more than the 117 exact plans
}

struct Case {
  const char* name;
  std::uint32_t n;
  EdgeList edges;
  std::vector<std::int64_t> population;
  std::size_t k;
  std::int64_t min, max;
};

std::vector<Case> irregular_cases() {
  std::vector<Case> c;
  c.push_back({"triangle-square-pendant k=2", 7, test::triangle_square_pendant_edges(),
               {}, 2, 2, 5});
  c.push_back({"triangle-square-pendant k=3 weighted", 7, test::triangle_square_pendant_edges(),
               {3, 1, 4, 1, 5, 9, 2}, 3, 6, 11});
  c.push_back({"two squares and a tail k=3", 9, test::two_squares_tail_edges(), {}, 3, 2, 4});
  c.push_back({"two squares and a tail k=2 weighted", 9, test::two_squares_tail_edges(),
               {2, 7, 1, 8, 2, 8, 1, 8, 2}, 2, 15, 24});
  c.push_back({"wheel 7 k=3", 8, test::wheel_edges(7), {}, 3, 2, 3});
  c.push_back({"petersen k=2", 10, test::petersen_edges(), {}, 2, 5, 5});
  c.push_back({"3x3 grid k=3 weighted", 9, test::grid_edges(3, 3), {1, 2, 1, 2, 5, 2, 1, 2, 1},
               3, 4, 7});
  const EdgeList two_triangles = {{0, 1}, {1, 2}, {0, 2}, {3, 4}, {4, 5}, {3, 5}};
  c.push_back({"disconnected: two triangles k=2", 6, two_triangles, {}, 2, 1, 6});
  c.push_back({"disconnected: two triangles k=3", 6, two_triangles, {}, 3, 1, 6});
  c.push_back({"zero-population units k=2", 6, test::path_edges(6), {0, 3, 0, 0, 3, 0}, 2, 3, 3});
  return c;
}

TEST(Enumerate, MatchesBruteForceOnIrregularGraphs) {
  for (const Case& c : irregular_cases()) {
    SCOPED_TRACE(c.name);
    const GraphHandle g_handle = share_graph(test::graph_from_edges(c.n, c.edges, c.population));
    const UnitGraph& g = *g_handle;
    std::set<std::vector<DistrictIndex>> got;
    for_each_plan(g, c.k, c.min, c.max, [&](std::span<const DistrictIndex> a) {
      EXPECT_TRUE(got.emplace(a.begin(), a.end()).second);
    });
    const auto want = test::brute_force_plans(g, c.k, c.min, c.max);
    EXPECT_EQ(got, want);
    EXPECT_FALSE(want.empty());  // every case is chosen to have plans, so the check has teeth
  }
}

TEST(Enumerate, EdgeCases) {
  const GraphHandle g_handle = share_graph(test::grid(3, 3));
  const UnitGraph& g = *g_handle;
  EXPECT_EQ(count_plans(g, 1, 9, 9), 1U);
  EXPECT_EQ(count_plans(g, 1, 10, 20), 0U);
  EXPECT_EQ(count_plans(g, 3, 4, 3), 0U);    // empty bounds
  EXPECT_EQ(count_plans(g, 10, 0, 9), 0U);   // more districts than units
  EXPECT_EQ(count_plans(g, 9, 1, 1), 1U);    // every unit its own district
  EXPECT_THROW((void)count_plans(g, 0, 0, 9), std::invalid_argument);
  const UnitGraph two = test::graph_from_edges(4, {{0, 1}, {2, 3}});
  EXPECT_EQ(count_plans(two, 1, 0, 100), 0U);  // a disconnected map is no single district
  EXPECT_EQ(count_plans(two, 2, 0, 100), 1U);
}

}  // namespace
}  // namespace planmill
