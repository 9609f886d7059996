// Region: units, local adjacency and populations against the graph it was cut from.
#include "planmill/tree/region.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <vector>

#include "planmill/plan/plan.hpp"
#include "small_graphs.hpp"

namespace planmill::test {
namespace {

// The induced subgraph, recomputed naively from the graph and compared with the region.
void expect_induced(const UnitGraph& g, const Region& region, std::span<const UnitIndex> units) {
  ASSERT_EQ(region.size(), units.size());
  std::int64_t total = 0;
  std::size_t twice_edges = 0;
  for (std::uint32_t i = 0; i < region.size(); ++i) {
    ASSERT_EQ(region.global(i), units[i]);
    EXPECT_EQ(region.local_of(units[i]), i);
    EXPECT_EQ(region.population(i), g.population(units[i]));
    total += g.population(units[i]);
    std::vector<UnitIndex> expected, got;
    for (const UnitIndex w : g.neighbors(units[i])) {
      if (std::find(units.begin(), units.end(), w) != units.end()) expected.push_back(w);
    }
    for (const std::uint32_t j : region.neighbors(i)) got.push_back(region.global(j));
    std::sort(expected.begin(), expected.end());
    std::sort(got.begin(), got.end());
    EXPECT_EQ(got, expected) << "unit " << units[i];
    twice_edges += got.size();
  }
  EXPECT_EQ(region.total_population(), total);
  EXPECT_EQ(region.edge_count() * 2, twice_edges);
  for (UnitIndex u = 0; u < g.unit_count(); ++u) {
    if (std::find(units.begin(), units.end(), u) == units.end()) {
      EXPECT_EQ(region.local_of(u), Region::kNotInRegion) << "unit " << u;
    }
  }
}

TEST(Region, TwoDistrictsOfAPlan) {
  std::vector<std::int64_t> pop(16);
  for (std::size_t u = 0; u < 16; ++u) pop[u] = static_cast<std::int64_t>(10 + u);
  const GraphHandle g_handle = share_graph(graph_from_edges(16, grid_edges(4, 4), pop));
  const UnitGraph& g = *g_handle;
  // Four 2x2 squares: district = 2 * (row / 2) + column / 2.
  std::vector<DistrictIndex> d(16);
  for (std::size_t u = 0; u < 16; ++u) d[u] = static_cast<DistrictIndex>(2 * (u / 8) + (u % 4) / 2);
  const Plan plan(g_handle, 4, d);
  Region region;
  region.build(plan, 0, 1);
  const std::vector<UnitIndex> top = {0, 1, 2, 3, 4, 5, 6, 7};
  expect_induced(g, region, top);
  region.build(plan, 3, 3);  // one district; the previous units must leave the map
  const std::vector<UnitIndex> last = {10, 11, 14, 15};
  expect_induced(g, region, last);
  region.build(plan, 2, 1);  // not adjacent as a pair: still the induced (disconnected) subgraph
  const std::vector<UnitIndex> diagonal = {2, 3, 6, 7, 8, 9, 12, 13};
  expect_induced(g, region, diagonal);
}

TEST(Region, GrownFromSeedsEqualsTheScannedRegion) {
  const GraphHandle g_handle = share_graph(graph_from_edges(36, grid_edges(6, 6)));
  const UnitGraph& g = *g_handle;
  // Six districts of 2 rows x 3 columns.
  std::vector<DistrictIndex> d(36);
  for (std::size_t u = 0; u < 36; ++u)
    d[u] = static_cast<DistrictIndex>(2 * ((u / 6) / 2) + (u % 6) / 3);
  const Plan plan(g_handle, 6, d);
  Region scanned, grown;
  for (UnitIndex u = 0; u < 36; ++u) {
    for (const UnitIndex w : g.neighbors(u)) {
      scanned.build(plan, plan.district_of(u), plan.district_of(w));
      grown.build_from_seeds(plan, u, w);
      std::vector<UnitIndex> a(scanned.units().begin(), scanned.units().end());
      std::vector<UnitIndex> b(grown.units().begin(), grown.units().end());
      std::sort(b.begin(), b.end());
      ASSERT_EQ(a, b) << "seeds " << u << ", " << w;
      expect_induced(g, grown, grown.units());
      EXPECT_EQ(grown.total_population(), scanned.total_population());
    }
  }
  grown.build_from_seeds(plan, 7, 7);  // one district
  EXPECT_EQ(grown.size(), 6U);
}

TEST(Region, UnitListInGivenOrderAndBadInput) {
  const GraphHandle g_handle = share_graph(graph_from_edges(10, petersen_edges()));
  const UnitGraph& g = *g_handle;
  Region region;
  const std::vector<UnitIndex> units = {9, 0, 5, 7, 2};
  region.build(g, units);
  expect_induced(g, region, units);
  const std::vector<UnitIndex> repeated = {1, 2, 1};
  EXPECT_THROW(region.build(g, repeated), std::invalid_argument);
  const std::vector<UnitIndex> outside = {1, 10};
  EXPECT_THROW(region.build(g, outside), std::invalid_argument);
  region.build(g, units);  // usable again after a failed build
  expect_induced(g, region, units);

  // A second graph of another size: the map is resized for it.
  const UnitGraph grid = graph_from_edges(25, grid_edges(5, 5));
  const std::vector<UnitIndex> row = {20, 21, 22, 23, 24};
  region.build(grid, row);
  expect_induced(grid, region, row);
}

}  // namespace
}  // namespace planmill::test
