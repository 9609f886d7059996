// The default merge-split bound M (planmill/moves/cut_bound.hpp, proof in docs/kernels.md): checked
// against every spanning tree of small graphs by brute force (trees listed as edge subsets, balanced
// edges counted by a search of each side, no planmill tree code), attained on a path built to be
// tight, and never exceeded by trees drawn on the kernel benchmark state.
#include "planmill/moves/cut_bound.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <filesystem>
#include <numeric>
#include <unistd.h>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/chain/chain.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/moves/kernel.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/synth/synth.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/spanning_tree.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

using Edges = test::EdgeList;

// Population of the side of `tree` minus edge `cut` that holds the cut edge's first end.
std::int64_t side_population(std::uint32_t n, const Edges& tree, std::size_t cut, const std::vector<std::int64_t>& pop) {
  std::vector<std::uint8_t> seen(n, 0);
  std::vector<UnitIndex> stack{tree[cut].first};
  seen[tree[cut].first] = 1;
  std::int64_t sum = 0;
  while (!stack.empty()) {
    const UnitIndex v = stack.back();
    stack.pop_back();
    sum += pop[v];
    for (std::size_t e = 0; e < tree.size(); ++e) {
      if (e == cut) continue;
      const auto [a, b] = tree[e];
      const UnitIndex w = a == v ? b : b == v ? a : v;
      if (w != v && !seen[w]) seen[w] = 1, stack.push_back(w);
    }
  }
  return sum;
}

std::size_t balanced_edges(std::uint32_t n, const Edges& tree, const std::vector<std::int64_t>& pop,
                           std::int64_t lo, std::int64_t hi) {
  const std::int64_t total = std::accumulate(pop.begin(), pop.end(), std::int64_t{0});
  std::size_t count = 0;
  for (std::size_t e = 0; e < tree.size(); ++e) {
    const std::int64_t s = side_population(n, tree, e, pop);
    if (s >= lo && s <= hi && total - s >= lo && total - s <= hi) ++count;
  }
  return count;
}

// Every spanning tree of (n, edges): the (n-1)-subsets of edges without a cycle (union-find).
std::vector<Edges> all_spanning_trees(std::uint32_t n, const Edges& edges) {
  std::vector<Edges> trees;
  std::vector<std::uint8_t> pick(edges.size(), 0);
  std::fill(pick.end() - (n - 1), pick.end(), 1);
  do {
    std::vector<UnitIndex> root(n);
    std::iota(root.begin(), root.end(), 0);
    auto find = [&](UnitIndex v) { while (root[v] != v) v = root[v] = root[root[v]]; return v; };
    Edges tree;
    bool forest = true;
    for (std::size_t e = 0; e < edges.size() && forest; ++e) {
      if (!pick[e]) continue;
      const UnitIndex a = find(edges[e].first), b = find(edges[e].second);
      forest = a != b;
      root[a] = b;
      tree.push_back(edges[e]);
    }
    if (forest) trees.push_back(tree);
  } while (std::next_permutation(pick.begin(), pick.end()));
  return trees;
}

TEST(BalancedEdgeBound, NoSpanningTreeOfSmallGraphsExceedsIt) {
  // (wheel_edges(n) has n + 1 vertices: the hub and n rim units.)
  // Graphs with cycles and branches (so trees of many shapes), populations with zeros, and every
  // band [lo, hi] of the small totals: below, at and above the condition 3 lo > P.
  const std::vector<std::pair<std::uint32_t, Edges>> graphs = {
      {6, test::grid_edges(2, 3)}, {7, test::wheel_edges(6)}, {8, test::grid_edges(2, 4)}, {6, test::complete_edges(6)}};
  Rng rng = make_stream(18, 1);
  std::vector<std::int64_t> scratch;
  std::size_t tight = 0, checked = 0;
  for (const auto& [n, edges] : graphs) {
    const auto trees = all_spanning_trees(n, edges);
    ASSERT_FALSE(trees.empty());
    for (int draw = 0; draw < 12; ++draw) {
      std::vector<std::int64_t> pop(n);
      for (auto& p : pop) p = static_cast<std::int64_t>(uniform_below(rng, 4));  // 0..3, zeros common
      const std::int64_t total = std::accumulate(pop.begin(), pop.end(), std::int64_t{0});
      for (std::int64_t lo = 0; lo <= total; ++lo)
        for (std::int64_t hi = lo; hi <= total; ++hi) {
          const std::size_t bound = balanced_edge_bound(pop, lo, hi, scratch);
          std::size_t most = 0;
          for (const Edges& t : trees) most = std::max(most, balanced_edges(n, t, pop, lo, hi));
          ASSERT_LE(most, bound) << "n " << n << " lo " << lo << " hi " << hi;
          EXPECT_LE(bound, n - 1);
          if (3 * lo > total && lo > 0) {
            ++checked;
            tight += most == bound;
          }
        }
    }
  }
  EXPECT_GT(checked, 100u);
  EXPECT_GT(tight, 0u);  // the bound is attained on some of these, not just safe
}

TEST(BalancedEdgeBound, PathBuiltToBeTightHasExactlyOnePlusZPlusGBalancedEdges) {
  // Path 10-0-1-1-0-10, band [10, 12]: P = 22 < 3 lo = 30, side interval [10, 12], width 2,
  // z = 2, g = 2 (1 + 1 = 2 <= 2, the sum reaching the width exactly). Left sides 10, 10, 11, 12,
  // 12: all five edges balanced, the ends 10 and 12 of the interval included.
  const std::vector<std::int64_t> pop = {10, 0, 1, 1, 0, 10};
  std::vector<std::int64_t> scratch;
  EXPECT_EQ(balanced_edge_bound(pop, 10, 12, scratch), 5u);
  EXPECT_EQ(balanced_edges(6, test::path_edges(6), pop, 10, 12), 5u);
  // The same through planmill's tree sampler (a path has one spanning tree).
  const UnitGraph g = test::graph_from_edges(6, test::path_edges(6), pop);
  Region region;
  std::vector<UnitIndex> units(6);
  std::iota(units.begin(), units.end(), 0);
  region.build(g, units);
  SpanningTreeSampler sampler;
  Rng rng = make_stream(18, 2);
  sampler.sample(region, rng);
  EXPECT_EQ(sampler.balanced_cuts(10, 12).size(), 5u);
  // Width 0 (exact equality): path 11-0-0-11 in [11, 11], z = 2, g = 0, all three edges balanced.
  const std::vector<std::int64_t> equal = {11, 0, 0, 11};
  EXPECT_EQ(balanced_edge_bound(equal, 11, 11, scratch), 3u);
  EXPECT_EQ(balanced_edges(4, test::path_edges(4), equal, 11, 11), 3u);
  // The narrower band [10, 11] on the first path: width 0 again (sides must be 11), bound 3.
  EXPECT_EQ(balanced_edge_bound(pop, 10, 11, scratch), 3u);
  EXPECT_EQ(balanced_edges(6, test::path_edges(6), pop, 10, 11), 1u);
}

TEST(BalancedEdgeBound, FallsBackToRegionSizeWhenThreeBandsFit) {
  std::vector<std::int64_t> scratch;
  const std::vector<std::int64_t> pop(9, 1);           // P = 9
  EXPECT_EQ(balanced_edge_bound(pop, 3, 6, scratch), 8u);  // 3 lo = P: fallback |U| - 1
  EXPECT_EQ(balanced_edge_bound(pop, 4, 5, scratch), 2u);  // 3 lo > P: width 1, g = 1
  // A star with three arms of 3 units around a centre: P = 10 at lo = 3 has three balanced edges
  // off one path, which the fallback allows.
  const std::vector<std::int64_t> star(10, 1);
  EXPECT_EQ(balanced_edge_bound(star, 3, 7, scratch), 9u);
}

TEST(BalancedEdgeBound, DrawnTreesOnTheBenchmarkStateStayWithinIt) {
  // The kernel benchmark state (synth 10,000 units, 100 districts, seed 7; a random seed plan at
  // ±5%), moved on by recombination; at each step a pair at a uniform cut edge, a tree of its union
  // drawn (uniform, then county-weighted), and its balanced edges counted from the parent array.
  const auto dir = std::filesystem::temp_directory_path() / ("planmill_cut_bound_" + std::to_string(getpid()));
  (void)write_synthetic_state({10000, 100, 7, dir.string()});
  const JobSpec job = load_job((dir / "job.toml").string());
  const GraphHandle graph = share_graph(load_unit_graph(job.map));
  std::filesystem::remove_all(dir);
  ChainSetup setup;
  setup.graph = graph;
  setup.rules.population_tolerance = 0.05;
  setup.kernel.kind = KernelKind::recombination;
  Rng rng = make_stream(7, 99);
  Chain chain(setup, random_seed_plan(graph, 100, setup.rules, rng));
  const std::int64_t lo = chain.state().rules.population_min(), hi = chain.state().rules.population_max();
  Region region;
  SpanningTreeSampler sampler;
  std::vector<std::int64_t> scratch, below;
  std::size_t largest = 0, most = 0;
  for (int draw = 0; draw < 1500; ++draw) {
    chain.step();
    const Plan& plan = chain.state().plan;
    const EdgeIndex e = uniform_cut_edge(plan, rng);
    region.set_weights({draw % 2 == 0 ? 1.0 : 4.0, 1.0});
    region.build_from_seeds(plan, graph->edge_first(e), graph->edge_second(e));
    sampler.sample(region, rng);
    below.assign(region.populations().begin(), region.populations().end());
    const auto order = sampler.order();
    const auto parent = sampler.parents();
    for (std::size_t i = order.size(); i-- > 1;) below[parent[order[i]]] += below[order[i]];
    const std::int64_t total = below[order[0]];
    std::size_t count = 0;
    for (std::size_t i = 1; i < order.size(); ++i) {
      const std::int64_t s = below[order[i]];
      count += s >= lo && s <= hi && total - s >= lo && total - s <= hi;
    }
    const std::size_t bound = balanced_edge_bound(region.populations(), lo, hi, scratch);
    ASSERT_LE(count, bound) << "draw " << draw;
    largest = std::max(largest, bound);
    most = std::max(most, count);
  }
  EXPECT_LT(largest, 60u);  // the point of the bound: far below |U| - 1 (about 200) here
  EXPECT_GT(most, 0u);
}

}  // namespace
}  // namespace planmill
