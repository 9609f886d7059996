// Hot-loop promise: once warmed up, Region::build, SpanningTreeSampler::sample, the tree
// queries and TreeCounter::log_count allocate nothing. Counted by replacing the global operator
// new in this test program.
#include <gtest/gtest.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <cstdlib>
#include <new>
#include <numeric>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/spanning_tree.hpp"
#include "planmill/tree/tree_count.hpp"
#include "count_allocations.hpp"
#include "random_regions.hpp"
#include "small_graphs.hpp"



namespace planmill::test {
namespace {

TEST(NoAllocation, RepeatedRecombinationPiecesOnOneRegionSize) {
  // 12x12 grid in four 6x6 districts; the region is the top pair or the bottom pair (72 units).
  const GraphHandle g_handle = share_graph(graph_from_edges(144, grid_edges(12, 12)));
  const UnitGraph& g = *g_handle;
  std::vector<DistrictIndex> d(144);
  for (std::size_t u = 0; u < 144; ++u)
    d[u] = static_cast<DistrictIndex>(2 * (u / 72) + (u % 12) / 6);
  const Plan plan(g_handle, 4, d);
  Region region;
  SpanningTreeSampler sampler;
  Rng rng = make_stream(81, 0);
  std::vector<std::uint8_t> side(144);
  region.build(plan, 0, 1);
  sampler.sample(region, rng);  // warm-up grows the buffers
  (void)sampler.balanced_cuts(0, 1000);
  const std::size_t region_bytes = region.capacity_bytes();
  const std::size_t sampler_bytes = sampler.capacity_bytes();

  const std::size_t before = planmill::test::allocations();
  std::size_t cuts = 0;
  for (int i = 0; i < 200; ++i) {
    if (i % 3 == 0) {
      region.build_from_seeds(plan, i % 2 == 0 ? 0 : 143, i % 2 == 0 ? 6 : 137);
    } else {
      region.build(plan, static_cast<DistrictIndex>(2 * (i % 2)),
                   static_cast<DistrictIndex>(2 * (i % 2) + 1));
    }
    sampler.sample(region, rng);
    const auto balanced = sampler.balanced_cuts(30, 42);
    cuts += balanced.size();
    if (!balanced.empty()) sampler.mark_side(balanced[0], side);
  }
  EXPECT_EQ(planmill::test::allocations() - before, 0U);
  EXPECT_EQ(region.capacity_bytes(), region_bytes);
  EXPECT_EQ(sampler.capacity_bytes(), sampler_bytes);
  EXPECT_GT(cuts, 0U);  // the loop did reach the cut code
}

TEST(NoAllocation, TreeCountsAfterWarmUpOnTheLargestRegion) {
  // Warm-up: the whole 24 x 24 planar grid (576 units). Then 300 random connected sub-regions
  // (holes, up to 576 units) of fresh random planar grids of that size, built beforehand.
  Rng rng = make_stream(82, 0);
  std::vector<UnitGraph> graphs;
  std::vector<Region> regions(300);
  for (int g = 0; g < 10; ++g) graphs.push_back(planar_grid(24, 24, 0.2 + 0.07 * g, rng));
  std::size_t largest = 0;
  for (std::size_t i = 0; i < regions.size(); ++i) {
    const UnitGraph& g = graphs[i % graphs.size()];
    regions[i].build(g, connected_region(g, 0.3 * uniform01(rng), rng));
    largest = std::max<std::size_t>(largest, regions[i].size());
  }
  TreeCounter counter;
  Region whole;
  std::vector<UnitIndex> all(576);
  std::iota(all.begin(), all.end(), 0);
  whole.build(graphs.back(), all);
  double sum = counter.log_count(whole);
  const std::size_t bytes = counter.capacity_bytes();

  const std::size_t before = planmill::test::allocations();
  for (const Region& r : regions) sum += counter.log_count(r);
  EXPECT_EQ(planmill::test::allocations() - before, 0U);
  EXPECT_EQ(counter.capacity_bytes(), bytes);
  EXPECT_GT(largest, 400U);       // the regions came close to the warm-up size
  EXPECT_TRUE(std::isfinite(sum));  // every region was connected and counted
}

TEST(NoAllocation, WeightedTreesAndCountsAfterWarmUp) {
  // County-weighted regions (four 6x6 counties on a 12x12 grid): build, draw, count, repeatedly.
  GraphExtras x;
  x.county = block_codes(12, 12, 6, 6);
  const GraphHandle g_handle = share_graph(grid(12, 12, x));
  std::vector<DistrictIndex> d(144);
  for (std::size_t u = 0; u < 144; ++u) d[u] = static_cast<DistrictIndex>(2 * (u / 72) + (u % 12) / 6);
  const Plan plan(g_handle, 4, d);
  Region region;
  region.set_weights({5.0, 1.0});
  SpanningTreeSampler sampler;
  TreeCounter counter;
  Rng rng = make_stream(83, 0);
  region.build(plan, 0, 1);
  sampler.sample(region, rng);
  double sum = counter.log_count(region);
  const std::size_t before = planmill::test::allocations();
  for (int i = 0; i < 100; ++i) {
    region.build(plan, static_cast<DistrictIndex>(2 * (i % 2)), static_cast<DistrictIndex>(2 * (i % 2) + 1));
    sampler.sample(region, rng);
    sum += counter.log_count(region);
  }
  EXPECT_EQ(planmill::test::allocations() - before, 0U);
  EXPECT_FALSE(region.weights().empty());  // the weighted paths ran
  EXPECT_TRUE(std::isfinite(sum));
}

TEST(NoAllocation, CounterSeesAllocations) {
  // The counter itself works (otherwise the test above proves nothing).
  const std::size_t before = planmill::test::allocations();
  auto* v = new std::vector<int>(100);
  delete v;
  EXPECT_GE(planmill::test::allocations() - before, 2U);
}

}  // namespace
}  // namespace planmill::test
