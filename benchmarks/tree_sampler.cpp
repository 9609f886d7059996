// Spanning-tree sampling on merged district pairs of the benchmark state: our Wilson sampler
// (tree + subtree populations + balanced cuts) against Boost.Graph's random_spanning_tree on the
// same regions. Each Boost graph is built once per region, outside the timed loop.
//
// Map: a 100 x 100 grid of unit-population units in 100 districts of 10 x 10; the regions are the
// 50 pairs of horizontally adjacent districts (200 units each). Balance ±5% of the ideal 100.
#include <benchmark/benchmark.h>

#include <boost/graph/adjacency_list.hpp>
#include <boost/graph/random_spanning_tree.hpp>
#include <boost/property_map/property_map.hpp>
#include <cstdint>
#include <string>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/graph/unit_graph.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/spanning_tree.hpp"

namespace {

using namespace planmill;

using BoostGraph = boost::adjacency_list<boost::vecS, boost::vecS, boost::undirectedS>;

struct BenchState {
  UnitGraph graph;
  std::vector<DistrictIndex> district;
  std::vector<std::pair<DistrictIndex, DistrictIndex>> pairs;
  std::int64_t lo = 0, hi = 0;
  std::vector<Region> regions;
  std::vector<BoostGraph> boost_graphs;

  BenchState() {
    constexpr std::uint32_t kSide = 100, kBlock = 10, kBlocks = kSide / kBlock;
    UnitGraphBuilder builder;
    for (std::uint32_t u = 0; u < kSide * kSide; ++u) (void)builder.add_unit(std::to_string(u), 1);
    for (std::uint32_t r = 0; r < kSide; ++r) {
      for (std::uint32_t c = 0; c < kSide; ++c) {
        const std::uint32_t u = r * kSide + c;
        if (c + 1 < kSide) (void)builder.add_edge(u, u + 1);
        if (r + 1 < kSide) (void)builder.add_edge(u, u + kSide);
      }
    }
    graph = std::move(builder).build();
    district.resize(kSide * kSide);
    for (std::uint32_t u = 0; u < kSide * kSide; ++u) {
      district[u] = static_cast<DistrictIndex>((u / kSide / kBlock) * kBlocks + (u % kSide) / kBlock);
    }
    for (DistrictIndex d = 0; d < kBlocks * kBlocks; d += 2) {
      pairs.emplace_back(d, static_cast<DistrictIndex>(d + 1));
    }
    const double ideal = static_cast<double>(graph.total_population()) / (kBlocks * kBlocks);
    lo = static_cast<std::int64_t>(std::ceil(0.95 * ideal));
    hi = static_cast<std::int64_t>(std::floor(1.05 * ideal));
    const Plan plan(graph, kBlocks * kBlocks, district);
    for (const auto& [a, b] : pairs) {
      Region& region = regions.emplace_back();
      region.build(plan, a, b);
      BoostGraph& g = boost_graphs.emplace_back(region.size());
      for (std::uint32_t v = 0; v < region.size(); ++v) {
        for (const std::uint32_t w : region.neighbors(v)) {
          if (v < w) boost::add_edge(v, w, g);
        }
      }
    }
  }
};

const BenchState& bench_state() {
  static const BenchState state;
  return state;
}

void set_counters(benchmark::State& state, double units, double cuts, double steps) {
  const auto trees = static_cast<double>(state.iterations());
  state.SetItemsProcessed(state.iterations());
  state.counters["units_per_region"] = units / trees;
  if (cuts >= 0) state.counters["balanced_cuts_per_tree"] = cuts / trees;
  if (steps >= 0) state.counters["walk_steps_per_tree"] = steps / trees;
}

// Ours: uniform tree, subtree populations and the list of balanced cuts.
void BM_WilsonTreeAndCuts(benchmark::State& state) {
  const BenchState& s = bench_state();
  SpanningTreeSampler sampler;
  Rng rng = make_stream(1, 0);
  std::size_t i = 0;
  double units = 0, cuts = 0, steps = 0;
  for (auto _ : state) {
    const Region& region = s.regions[i++ % s.regions.size()];
    sampler.sample(region, rng);
    const auto balanced = sampler.balanced_cuts(s.lo, s.hi);
    benchmark::DoNotOptimize(balanced.data());
    units += region.size();
    cuts += static_cast<double>(balanced.size());
    steps += static_cast<double>(sampler.walk_steps());
  }
  set_counters(state, units, cuts, steps);
}
BENCHMARK(BM_WilsonTreeAndCuts);

// Ours, the tree alone (subtree populations included: sample() computes them).
void BM_WilsonTreeOnly(benchmark::State& state) {
  const BenchState& s = bench_state();
  SpanningTreeSampler sampler;
  Rng rng = make_stream(1, 0);
  std::size_t i = 0;
  double units = 0;
  for (auto _ : state) {
    const Region& region = s.regions[i++ % s.regions.size()];
    sampler.sample(region, rng);
    benchmark::DoNotOptimize(sampler.parents().data());
    units += region.size();
  }
  set_counters(state, units, -1, -1);
}
BENCHMARK(BM_WilsonTreeOnly);

// Boost.Graph's Wilson implementation on the same regions, uniform root, reused maps.
void BM_BoostRandomSpanningTree(benchmark::State& state) {
  const BenchState& s = bench_state();
  Rng rng = make_stream(1, 0);
  std::size_t i = 0;
  double units = 0;
  std::vector<BoostGraph::vertex_descriptor> predecessor;
  std::vector<boost::default_color_type> color;
  for (auto _ : state) {
    const std::size_t r = i++ % s.regions.size();
    const BoostGraph& g = s.boost_graphs[r];
    const std::size_t n = boost::num_vertices(g);
    predecessor.resize(n);
    color.resize(n);
    const auto root = static_cast<BoostGraph::vertex_descriptor>(
        uniform_below(rng, static_cast<std::uint32_t>(n)));
    boost::random_spanning_tree(g, rng, root, predecessor.data(),
                                boost::static_property_map<double>(1.0), color.data());
    benchmark::DoNotOptimize(predecessor.data());
    units += static_cast<double>(n);
  }
  set_counters(state, units, -1, -1);
}
BENCHMARK(BM_BoostRandomSpanningTree);

// Building one merged region from the plan (scans all 10,000 labels once).
void BM_RegionBuildFromPlan(benchmark::State& state) {
  const BenchState& s = bench_state();
  const Plan plan(s.graph, 100, s.district);
  Region region;
  std::size_t i = 0;
  for (auto _ : state) {
    const auto& [a, b] = s.pairs[i++ % s.pairs.size()];
    region.build(plan, a, b);
    benchmark::DoNotOptimize(region.adjacency().data());
  }
  state.SetItemsProcessed(state.iterations());
}
BENCHMARK(BM_RegionBuildFromPlan);

// The same regions grown breadth-first from one unit of each district: O(region), not O(map).
void BM_RegionBuildFromSeeds(benchmark::State& state) {
  const BenchState& s = bench_state();
  const Plan plan(s.graph, 100, s.district);
  std::vector<std::pair<UnitIndex, UnitIndex>> seeds;
  for (const Region& region : s.regions) seeds.emplace_back(region.global(0), region.global(region.size() - 1));
  Region region;
  std::size_t i = 0;
  for (auto _ : state) {
    const auto& [a, b] = seeds[i++ % seeds.size()];
    region.build_from_seeds(plan, a, b);
    benchmark::DoNotOptimize(region.adjacency().data());
  }
  state.SetItemsProcessed(state.iterations());
}
BENCHMARK(BM_RegionBuildFromSeeds);

}  // namespace

BENCHMARK_MAIN();
