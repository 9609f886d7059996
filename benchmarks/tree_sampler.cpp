// Spanning-tree sampling on merged district pairs: our Wilson sampler (tree + subtree
// populations + balanced cuts) against Boost.Graph's random_spanning_tree on the same regions.
// Each Boost graph is built once per region, outside the timed loop.
//
// Maps (first benchmark argument): 0 = the benchmark state, `synth` with 10,000 units and 100
// districts, cut into 100 districts within ±3% by recursive spanning-tree bisection; regions are
// all pairs of adjacent districts. 1 = a 100 x 100 grid of 10 x 10 blocks, regions = the 50
// horizontal pairs of 200 units. Balanced cuts use ±5% of the ideal population. Regions are grown
// from a cut edge between the pair (Region::build_from_seeds), as the kernels grow them.
// BM_WilsonRoot/MAP/RULE: the tree and cuts rooted by RULE 0 = a uniform unit (before issue 18),
// 1 = SpanningTreeSampler::chosen_root (what sample(region, rng) does); MAP 2 = single districts
// of map 0 (100 units), the regions merge-split counts.
#include <benchmark/benchmark.h>
#include <unistd.h>

#include <boost/graph/adjacency_list.hpp>
#include <boost/graph/random_spanning_tree.hpp>
#include <boost/property_map/property_map.hpp>
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <filesystem>
#include <set>
#include <stdexcept>
#include <string>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/graph/unit_graph.hpp"
#include "planmill/job/job.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/synth/synth.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/spanning_tree.hpp"

namespace {

using namespace planmill;

using BoostGraph = boost::adjacency_list<boost::vecS, boost::vecS, boost::undirectedS>;

UnitGraph grid_graph(std::uint32_t side) {
  UnitGraphBuilder builder;
  for (std::uint32_t u = 0; u < side * side; ++u) (void)builder.add_unit(std::to_string(u), 1);
  for (std::uint32_t r = 0; r < side; ++r) {
    for (std::uint32_t c = 0; c < side; ++c) {
      const std::uint32_t u = r * side + c;
      if (c + 1 < side) (void)builder.add_edge(u, u + 1);
      if (r + 1 < side) (void)builder.add_edge(u, u + side);
    }
  }
  return std::move(builder).build();
}

// Splits `units` into `k` districts labelled first..first+k-1: draw trees until one has an edge
// whose sides hold k1 = k/2 and k - k1 districts' worth of population, within a window of
// 0.4% x min(k1, k2) districts (2% at the last split). Errors add up over about 7 levels to < 5%.
void bisect(const UnitGraph& graph, std::vector<UnitIndex> units, std::size_t k,
            DistrictIndex first, std::vector<DistrictIndex>& district, Rng& rng) {
  if (k == 1) {
    for (const UnitIndex u : units) district[u] = first;
    return;
  }
  Region region;
  region.build(graph, units);
  SpanningTreeSampler sampler;
  const std::size_t k1 = k / 2, k2 = k - k1;
  const double mean = static_cast<double>(region.total_population()) / static_cast<double>(k);
  const double window = (k <= 3 ? 0.02 : 0.004 * static_cast<double>(k1)) * mean;
  std::vector<std::uint8_t> side(region.size());
  for (int attempt = 0; attempt < 200000; ++attempt) {
    sampler.sample(region, rng, uniform_below(rng, region.size()));  // the state as first drawn
    for (std::uint32_t v = 0; v < region.size(); ++v) {
      if (v == sampler.root()) continue;
      const auto below = static_cast<double>(sampler.subtree_population()[v]);
      const bool below_is_k1 = std::abs(below - static_cast<double>(k1) * mean) <= window;
      const bool below_is_k2 = std::abs(below - static_cast<double>(k2) * mean) <= window;
      if (!below_is_k1 && !below_is_k2) continue;
      sampler.mark_side(v, side);
      std::vector<UnitIndex> part1, part2;
      for (std::uint32_t x = 0; x < region.size(); ++x) {
        ((side[x] == 1) == below_is_k1 ? part1 : part2).push_back(region.global(x));
      }
      bisect(graph, std::move(part1), k1, first, district, rng);
      bisect(graph, std::move(part2), k2, static_cast<DistrictIndex>(first + k1), district, rng);
      return;
    }
  }
  throw std::runtime_error("bisect: no balanced split found");
}

struct BenchState {
  std::shared_ptr<UnitGraph> owned_graph = std::make_shared<UnitGraph>();  // filled in below
  UnitGraph& graph = *owned_graph;
  GraphHandle graph_handle = owned_graph;
  std::size_t k = 100;
  std::vector<DistrictIndex> district;
  std::vector<std::pair<DistrictIndex, DistrictIndex>> pairs;
  std::vector<std::pair<UnitIndex, UnitIndex>> seeds;  // one unit of each district of a pair
  std::int64_t lo = 0, hi = 0;
  double max_deviation = 0.0;
  std::vector<Region> regions;
  std::vector<Region> districts;  // single districts, grown from one unit
  std::vector<BoostGraph> boost_graphs;

  explicit BenchState(bool synthetic) {
    if (synthetic) {
      const auto dir = std::filesystem::temp_directory_path() /
                       ("planmill_bench_tree_" + std::to_string(::getpid()));
      SynthOptions options;
      options.units = 10000;
      options.districts = k;
      options.seed = 1;
      options.out_dir = dir.string();
      (void)write_synthetic_state(options);
      MapSpec map = load_job((dir / "job.toml").string()).map;
      map.municipality_column.clear();  // not needed here (the loader rejects empty codes)
      graph = load_unit_graph(map);
      std::filesystem::remove_all(dir);
      district.assign(graph.unit_count(), 0);
      std::vector<UnitIndex> all(graph.unit_count());
      for (UnitIndex u = 0; u < all.size(); ++u) all[u] = u;
      Rng rng = make_stream(2, 0);
      bisect(graph, std::move(all), k, 0, district, rng);
    } else {
      constexpr std::uint32_t kSide = 100, kBlock = 10, kBlocks = kSide / kBlock;
      graph = grid_graph(kSide);
      district.resize(kSide * kSide);
      for (std::uint32_t u = 0; u < kSide * kSide; ++u) {
        district[u] =
            static_cast<DistrictIndex>((u / kSide / kBlock) * kBlocks + (u % kSide) / kBlock);
      }
    }
    const Plan plan(graph_handle, k, district);
    max_deviation = plan.max_population_deviation();
    std::set<std::pair<DistrictIndex, DistrictIndex>> adjacent;
    for (EdgeIndex e = 0; e < graph.edge_count(); ++e) {
      DistrictIndex a = district[graph.edge_first(e)], b = district[graph.edge_second(e)];
      if (a == b) continue;
      if (a > b) std::swap(a, b);
      if (synthetic || (b == a + 1 && a % 2 == 0)) {
        if (adjacent.emplace(a, b).second)
          seeds.emplace_back(graph.edge_first(e), graph.edge_second(e));
      }
    }
    pairs.assign(adjacent.begin(), adjacent.end());
    // seeds in the order of pairs (the set sorted them)
    std::vector<std::pair<UnitIndex, UnitIndex>> by_pair(pairs.size());
    for (const auto& [u, w] : seeds) {
      std::pair<DistrictIndex, DistrictIndex> key(std::min(district[u], district[w]), std::max(district[u], district[w]));
      by_pair[static_cast<std::size_t>(std::lower_bound(pairs.begin(), pairs.end(), key) - pairs.begin())] = {u, w};
    }
    seeds = by_pair;
    std::vector<bool> grown(k, false);
    for (UnitIndex u = 0; u < graph.unit_count(); ++u) {
      if (grown[district[u]]) continue;
      grown[district[u]] = true;
      districts.emplace_back().build_from_seeds(plan, u, u);
    }
    const double ideal = plan.ideal_population();
    lo = static_cast<std::int64_t>(std::ceil(0.95 * ideal));
    hi = static_cast<std::int64_t>(std::floor(1.05 * ideal));
    for (std::size_t p = 0; p < pairs.size(); ++p) {
      Region& region = regions.emplace_back();
      region.build_from_seeds(plan, seeds[p].first, seeds[p].second);
      BoostGraph& g = boost_graphs.emplace_back(region.size());
      for (std::uint32_t v = 0; v < region.size(); ++v) {
        for (const std::uint32_t w : region.neighbors(v)) {
          if (v < w) boost::add_edge(v, w, g);
        }
      }
    }
  }
};

const BenchState& bench_state(std::int64_t map) {
  static const BenchState synthetic(true), grid(false);
  return map == 0 ? synthetic : grid;
}
const BenchState& bench_state(const benchmark::State& state) { return bench_state(state.range(0)); }

void set_counters(benchmark::State& state, double units, double cuts, double steps) {
  const auto trees = static_cast<double>(state.iterations());
  state.SetItemsProcessed(state.iterations());
  state.counters["units_per_region"] = units / trees;
  state.counters["regions"] = static_cast<double>(bench_state(state).regions.size());
  state.counters["max_deviation"] = bench_state(state).max_deviation;
  if (cuts >= 0) state.counters["balanced_cuts_per_tree"] = cuts / trees;
  if (steps >= 0) state.counters["walk_steps_per_tree"] = steps / trees;
}

// Ours: uniform tree, subtree populations and the list of balanced cuts.
void BM_WilsonTreeAndCuts(benchmark::State& state) {
  const BenchState& s = bench_state(state);
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
BENCHMARK(BM_WilsonTreeAndCuts)->Arg(0)->Arg(1);

// Walk steps by root rule: a uniform root (before) against the chosen one (after).
void BM_WilsonRoot(benchmark::State& state) {
  const BenchState& s = bench_state(state.range(0) == 2 ? 0 : state.range(0));
  const std::vector<Region>& regions = state.range(0) == 2 ? s.districts : s.regions;
  SpanningTreeSampler sampler;
  Rng rng = make_stream(1, 0);
  std::size_t i = 0;
  double units = 0, cuts = 0, steps = 0;
  for (auto _ : state) {
    const Region& region = regions[i++ % regions.size()];
    if (state.range(1) == 0) {
      sampler.sample(region, rng, uniform_below(rng, region.size()));
    } else {
      sampler.sample(region, rng);
    }
    const auto balanced = sampler.balanced_cuts(s.lo, s.hi);
    benchmark::DoNotOptimize(balanced.data());
    units += region.size();
    cuts += static_cast<double>(balanced.size());
    steps += static_cast<double>(sampler.walk_steps());
  }
  const auto trees = static_cast<double>(state.iterations());
  state.counters["units_per_region"] = units / trees;
  state.counters["walk_steps_per_tree"] = steps / trees;
  state.counters["balanced_cuts_per_tree"] = cuts / trees;
}
BENCHMARK(BM_WilsonRoot)->ArgsProduct({{0, 1, 2}, {0, 1}});

// Ours, the tree alone (subtree populations included: sample() computes them).
void BM_WilsonTreeOnly(benchmark::State& state) {
  const BenchState& s = bench_state(state);
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
BENCHMARK(BM_WilsonTreeOnly)->Arg(0)->Arg(1);

// Boost.Graph's Wilson implementation on the same regions, uniform root, reused maps.
void BM_BoostRandomSpanningTree(benchmark::State& state) {
  const BenchState& s = bench_state(state);
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
BENCHMARK(BM_BoostRandomSpanningTree)->Arg(0)->Arg(1);

// Building one merged region from the plan (scans all the map's labels once).
void BM_RegionBuildFromPlan(benchmark::State& state) {
  const BenchState& s = bench_state(state);
  const Plan plan(s.graph_handle, s.k, s.district);
  Region region;
  std::size_t i = 0;
  for (auto _ : state) {
    const auto& [a, b] = s.pairs[i++ % s.pairs.size()];
    region.build(plan, a, b);
    benchmark::DoNotOptimize(region.adjacency().targets().data());
  }
  state.SetItemsProcessed(state.iterations());
}
BENCHMARK(BM_RegionBuildFromPlan)->Arg(0)->Arg(1);

// The same regions grown breadth-first from one unit of each district: O(region), not O(map).
void BM_RegionBuildFromSeeds(benchmark::State& state) {
  const BenchState& s = bench_state(state);
  const Plan plan(s.graph_handle, s.k, s.district);
  const auto& seeds = s.seeds;
  Region region;
  std::size_t i = 0;
  for (auto _ : state) {
    const auto& [a, b] = seeds[i++ % seeds.size()];
    region.build_from_seeds(plan, a, b);
    benchmark::DoNotOptimize(region.adjacency().targets().data());
  }
  state.SetItemsProcessed(state.iterations());
}
BENCHMARK(BM_RegionBuildFromSeeds)->Arg(0)->Arg(1);

}  // namespace

BENCHMARK_MAIN();
