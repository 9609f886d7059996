// Wilson's sampler: exact uniformity (chi-square against uniform over all spanning trees, found by
// brute force), the expected walk length, and subtree populations / balanced cuts / sides against
// brute force.
#include "planmill/tree/spanning_tree.hpp"

#include <gtest/gtest.h>

#include <Eigen/Dense>
#include <algorithm>
#include <bit>
#include <cmath>
#include <cstdint>
#include <map>
#include <numeric>
#include <string>
#include <vector>

#include "chi_square.hpp"
#include "tree_catalog.hpp"
#include "planmill/base/random.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/tree_count.hpp"
#include "small_graphs.hpp"

namespace planmill::test {
namespace {

// A failing uniformity test at this level is a bug, not bad luck (seeds are fixed anyway).
constexpr double kPValueThreshold = 1e-4;

enum class RootChoice { chosen, fixed };  // chosen: sample(region, rng), SpanningTreeSampler::chosen_root

ChiSquareResult wilson_chi_square(const Region& region, const TreeCatalog& catalog,
                                  std::size_t draws_per_tree, RootChoice roots,
                                  std::uint32_t fixed_root, std::uint64_t seed) {
  std::vector<std::uint64_t> counts(catalog.tree_count(), 0);
  SpanningTreeSampler sampler;
  Rng rng = make_stream(seed, 0);
  const std::size_t draws = draws_per_tree * catalog.tree_count();
  for (std::size_t i = 0; i < draws; ++i) {
    if (roots == RootChoice::chosen) {
      sampler.sample(region, rng);
    } else {
      sampler.sample(region, rng, fixed_root);
    }
    ++counts[catalog.index_of(sampler.parents())];
  }
  const ChiSquareResult result = chi_square_uniform(counts);
  ::testing::Test::RecordProperty("p_value_seed_" + std::to_string(seed),
                                  std::to_string(result.p_value));
  return result;
}

// The 3x3 block in the top-left corner of a 4x4 grid, as the union of two districts of a plan.
struct GridBlock {
  const GraphHandle graph_handle = share_graph(graph_from_edges(16, grid_edges(4, 4)));
  const UnitGraph& graph = *graph_handle;
  Region region;
  GridBlock() {
    // District 0: units 0, 1, 2, 4; district 1: 5, 6, 8, 9, 10; district 2: the rest.
    std::vector<DistrictIndex> d(16, 2);
    for (const UnitIndex u : {0U, 1U, 2U, 4U}) d[u] = 0;
    for (const UnitIndex u : {5U, 6U, 8U, 9U, 10U}) d[u] = 1;
    const Plan plan(graph_handle, 3, d);
    region.build(plan, 0, 1);
  }
};

TEST(WilsonUniformity, ThreeByThreeGridChosenRootAndFixedRoots) {
  GridBlock block;
  const TreeCatalog catalog(block.region);
  ASSERT_EQ(catalog.tree_count(), 192U);  // OEIS A007341, 3x3 grid
  const auto chosen_root =
      wilson_chi_square(block.region, catalog, 200, RootChoice::chosen, 0, 11);
  EXPECT_GT(chosen_root.p_value, kPValueThreshold) << "X2=" << chosen_root.statistic;
  // Uniformity holds for any fixed root: a corner (local 0) and the centre (unit 5, local 4).
  const auto corner = wilson_chi_square(block.region, catalog, 200, RootChoice::fixed, 0, 12);
  EXPECT_GT(corner.p_value, kPValueThreshold) << "X2=" << corner.statistic;
  const auto centre = wilson_chi_square(block.region, catalog, 200, RootChoice::fixed,
                                        block.region.local_of(5), 13);
  EXPECT_GT(centre.p_value, kPValueThreshold) << "X2=" << centre.statistic;
}

TEST(WilsonUniformity, IrregularGraphAndCompleteGraph) {
  const UnitGraph irregular = graph_from_edges(7, triangle_square_pendant_edges());
  const std::vector<UnitIndex> all7 = {0, 1, 2, 3, 4, 5, 6};
  Region region;
  region.build(irregular, all7);
  const TreeCatalog catalog(region);
  ASSERT_EQ(catalog.tree_count(), 24U);  // 3 x 8, see small_graphs.hpp
  EXPECT_GT(wilson_chi_square(region, catalog, 1000, RootChoice::chosen, 0, 21).p_value,
            kPValueThreshold);
  EXPECT_GT(wilson_chi_square(region, catalog, 1000, RootChoice::fixed, 6, 22).p_value,
            kPValueThreshold);  // the pendant as root

  const UnitGraph k4 = graph_from_edges(4, complete_edges(4));
  const std::vector<UnitIndex> all4 = {3, 1, 0, 2};  // any local order
  region.build(k4, all4);
  const TreeCatalog k4_catalog(region);
  ASSERT_EQ(k4_catalog.tree_count(), 16U);  // Cayley: 4^2
  EXPECT_GT(wilson_chi_square(region, k4_catalog, 1000, RootChoice::chosen, 0, 23).p_value,
            kPValueThreshold);
}

// Power check: the same test must reject samplers known not to be uniform.
TEST(WilsonUniformity, ChiSquareCheckRejectsNonUniformSamplers) {
  GridBlock block;
  const TreeCatalog catalog(block.region);
  Rng rng = make_stream(31, 0);
  const std::size_t draws = 200 * catalog.tree_count();  // same size as the uniformity test

  // Minimum spanning tree under i.i.d. uniform edge weights (Kruskal): not uniform (a standard
  // counterexample; Broder 1989 motivates random-walk samplers by it).
  std::vector<std::uint64_t> counts(catalog.tree_count(), 0);
  std::vector<std::pair<double, std::uint32_t>> weighted(catalog.edge_count());
  for (std::size_t i = 0; i < draws; ++i) {
    for (std::uint32_t e = 0; e < catalog.edge_count(); ++e) weighted[e] = {uniform01(rng), e};
    std::sort(weighted.begin(), weighted.end());
    UnionFind uf(block.region.size());
    std::uint64_t mask = 0;
    for (const auto& [w, e] : weighted) {
      if (uf.unite(catalog.edge(e).first, catalog.edge(e).second)) mask |= std::uint64_t{1} << e;
    }
    ++counts[catalog.index_of_mask(mask)];
  }
  const ChiSquareResult mst = chi_square_uniform(counts);
  EXPECT_LT(mst.p_value, kPValueThreshold) << "X2=" << mst.statistic;
  RecordProperty("mst_chi_square", std::to_string(mst.statistic));

  // Breadth-first tree from a uniform root with neighbours visited in random order.
  std::fill(counts.begin(), counts.end(), 0);
  for (std::size_t i = 0; i < draws; ++i) {
    const std::uint32_t n = block.region.size();
    std::vector<std::uint32_t> parent(n, SpanningTreeSampler::kNoParent), queue;
    std::vector<bool> seen(n, false);
    const std::uint32_t root = uniform_below(rng, n);
    queue.push_back(root);
    seen[root] = true;
    for (std::size_t head = 0; head < queue.size(); ++head) {
      std::vector<std::uint32_t> nb(block.region.neighbors(queue[head]).begin(),
                                    block.region.neighbors(queue[head]).end());
      for (std::size_t k = nb.size(); k > 1; --k) {
        std::swap(nb[k - 1], nb[uniform_below(rng, static_cast<std::uint32_t>(k))]);
      }
      for (const std::uint32_t w : nb) {
        if (!seen[w]) {
          seen[w] = true;
          parent[w] = queue[head];
          queue.push_back(w);
        }
      }
    }
    ++counts[catalog.index_of(parent)];
  }
  const ChiSquareResult bfs = chi_square_uniform(counts);
  EXPECT_LT(bfs.p_value, kPValueThreshold) << "X2=" << bfs.statistic;
  RecordProperty("bfs_chi_square", std::to_string(bfs.statistic));
}

// Σ_v π(v) (E_v T_r + E_r T_v), π(v) = deg(v) / 2|E|: Wilson's expected number of walk steps
// (Wilson, STOC 1996), computed here from hitting times by dense linear solves.
double expected_wilson_steps(const Region& region, std::uint32_t root) {
  const std::uint32_t n = region.size();
  // hitting[t](v) = E_v T_t.
  auto hitting_times_to = [&](std::uint32_t target) {
    Eigen::MatrixXd a = Eigen::MatrixXd::Zero(n, n);
    Eigen::VectorXd b = Eigen::VectorXd::Ones(n);
    for (std::uint32_t v = 0; v < n; ++v) {
      a(v, v) = 1.0;
      if (v == target) {
        b(v) = 0.0;
        continue;
      }
      for (const std::uint32_t w : region.neighbors(v)) a(v, w) -= 1.0 / region.degree(v);
    }
    return Eigen::VectorXd(a.partialPivLu().solve(b));
  };
  const Eigen::VectorXd to_root = hitting_times_to(root);
  double two_m = 0.0, sum = 0.0;
  for (std::uint32_t v = 0; v < n; ++v) two_m += region.degree(v);
  for (std::uint32_t v = 0; v < n; ++v) {
    sum += region.degree(v) / two_m * (to_root(v) + hitting_times_to(v)(root));
  }
  return sum;
}

TEST(WilsonWalkLength, FourByFourGridMeanStepsMatchTheCommuteTimeFormula) {
  const GraphHandle g_handle = share_graph(graph_from_edges(16, grid_edges(4, 4)));
  const UnitGraph& g = *g_handle;
  std::vector<UnitIndex> all(16);
  std::iota(all.begin(), all.end(), 0U);
  Region region;
  region.build(g, all);
  // Worked value (docs/kernels.md, "Check values"; derived outside planmill): corner root,
  // 1605/28 steps; our hitting-time computation must agree.
  EXPECT_NEAR(expected_wilson_steps(region, 0), 1605.0 / 28.0, 1e-9);

  SpanningTreeSampler sampler;
  for (const std::uint32_t root : {0U, 5U}) {  // a corner and an inner vertex
    const double expected = expected_wilson_steps(region, root);
    Rng rng = make_stream(41, root);
    constexpr int kDraws = 40000;
    double sum = 0.0, sum_sq = 0.0;
    for (int i = 0; i < kDraws; ++i) {
      sampler.sample(region, rng, root);
      const auto s = static_cast<double>(sampler.walk_steps());
      sum += s;
      sum_sq += s * s;
    }
    const double mean = sum / kDraws;
    const double sd = std::sqrt((sum_sq - kDraws * mean * mean) / (kDraws - 1));
    const double z = (mean - expected) / (sd / std::sqrt(kDraws));
    EXPECT_LT(std::abs(z), 4.5) << "root " << root << ": mean " << mean << " vs " << expected;
    RecordProperty("z_root_" + std::to_string(root), std::to_string(z));
  }
}

// Random connected graphs: a random recursive tree plus `extra` random edges, random
// populations. Returns the edge list; the graph has n vertices.
EdgeList random_connected_edges(std::uint32_t n, std::uint32_t extra, Rng& rng) {
  EdgeList edges;
  std::vector<std::uint32_t> label(n);
  std::iota(label.begin(), label.end(), 0U);
  for (std::uint32_t k = n; k > 1; --k) std::swap(label[k - 1], label[uniform_below(rng, k)]);
  for (std::uint32_t v = 1; v < n; ++v) edges.emplace_back(label[v], label[uniform_below(rng, v)]);
  for (std::uint32_t i = 0; i < extra && n > 1; ++i) {
    const std::uint32_t a = uniform_below(rng, n), b = uniform_below(rng, n);
    if (a != b) edges.emplace_back(a, b);  // duplicates are merged by the builder
  }
  return edges;
}

TEST(TreeQueries, SubtreePopulationsCutsAndSidesMatchBruteForce) {
  Rng rng = make_stream(51, 0);
  SpanningTreeSampler sampler;
  Region region;
  std::vector<std::uint8_t> side;
  for (int trial = 0; trial < 400; ++trial) {
    const std::uint32_t n = 1 + uniform_below(rng, 30);
    const std::uint32_t extra = trial % 2 == 0 ? 0 : uniform_below(rng, 2 * n);  // trees, graphs
    std::vector<std::int64_t> pop(n);
    for (auto& p : pop) p = uniform_below(rng, 101);
    const GraphHandle g_handle = share_graph(graph_from_edges(n, random_connected_edges(n, extra, rng), pop));
    const UnitGraph& g = *g_handle;
    std::vector<UnitIndex> units(n);
    std::iota(units.begin(), units.end(), 0U);
    region.build(g, units);
    sampler.sample(region, rng);

    // Tree adjacency from the parents, checking each is a region edge and the root is reached.
    const auto parent = sampler.parents();
    std::vector<std::vector<std::uint32_t>> tree(n);
    for (std::uint32_t v = 0; v < n; ++v) {
      if (v == sampler.root()) {
        ASSERT_EQ(parent[v], SpanningTreeSampler::kNoParent);
        continue;
      }
      const auto nb = region.neighbors(v);
      ASSERT_NE(std::find(nb.begin(), nb.end(), parent[v]), nb.end());
      tree[v].push_back(parent[v]);
      tree[parent[v]].push_back(v);
      std::uint32_t up = v;
      for (std::uint32_t hops = 0; up != sampler.root(); ++hops) {
        ASSERT_LT(hops, n) << "parents form a cycle";
        up = parent[up];
      }
    }
    // The order lists every vertex once, parents first.
    std::vector<std::uint32_t> position(n, n);
    for (std::uint32_t k = 0; k < n; ++k) position[sampler.order()[k]] = k;
    for (std::uint32_t v = 0; v < n; ++v) {
      ASSERT_LT(position[v], n);
      if (v != sampler.root()) EXPECT_LT(position[parent[v]], position[v]);
    }

    const std::int64_t total = std::accumulate(pop.begin(), pop.end(), std::int64_t{0});
    EXPECT_EQ(region.total_population(), total);
    const std::int64_t lo = uniform_below(rng, static_cast<std::uint32_t>(total + 1));
    const std::int64_t hi = lo + uniform_below(rng, static_cast<std::uint32_t>(total + 1));
    std::vector<std::uint32_t> expected_cuts;
    side.assign(n, 7);
    for (std::uint32_t v = 0; v < n; ++v) {
      if (v == sampler.root()) continue;
      // Side of v once the edge (v, parent) is removed: search the tree without crossing it.
      std::vector<bool> in(n, false);
      std::vector<std::uint32_t> stack = {v};
      in[v] = true;
      std::int64_t below = 0;
      while (!stack.empty()) {
        const std::uint32_t x = stack.back();
        stack.pop_back();
        below += pop[x];
        for (const std::uint32_t y : tree[x]) {
          if (!in[y] && !(x == v && y == parent[v])) {
            in[y] = true;
            stack.push_back(y);
          }
        }
      }
      EXPECT_EQ(sampler.subtree_population()[v], below);
      const std::int64_t above = total - below;
      if (below >= lo && below <= hi && above >= lo && above <= hi) expected_cuts.push_back(v);
      sampler.mark_side(v, side);
      for (std::uint32_t x = 0; x < n; ++x) ASSERT_EQ(side[x], in[x] ? 1 : 0);
    }
    EXPECT_EQ(sampler.subtree_population()[sampler.root()], total);
    const auto cuts = sampler.balanced_cuts(lo, hi);
    EXPECT_EQ(std::vector<std::uint32_t>(cuts.begin(), cuts.end()), expected_cuts)
        << "n=" << n << " lo=" << lo << " hi=" << hi;
  }
}

TEST(TreeQueries, SingleVertexAndDisconnectedRegion) {
  const GraphHandle g_handle = share_graph(graph_from_edges(3, {{0, 1}}));
  const UnitGraph& g = *g_handle;
  Region region;
  SpanningTreeSampler sampler;
  Rng rng = make_stream(61, 0);
  const std::vector<UnitIndex> one = {2};
  region.build(g, one);
  sampler.sample(region, rng);
  EXPECT_EQ(sampler.root(), 0U);
  EXPECT_EQ(sampler.walk_steps(), 0U);
  EXPECT_TRUE(sampler.balanced_cuts(0, 100).empty());
  const std::vector<UnitIndex> all = {0, 1, 2};
  region.build(g, all);
  EXPECT_THROW(sampler.sample(region, rng), std::invalid_argument);
}

TEST(TreeQueries, SameSeedSameTree) {
  GridBlock block;
  SpanningTreeSampler a, b;
  Rng ra = make_stream(71, 3), rb = make_stream(71, 3);
  for (int i = 0; i < 50; ++i) {
    a.sample(block.region, ra);
    b.sample(block.region, rb);
    ASSERT_TRUE(std::equal(a.parents().begin(), a.parents().end(), b.parents().begin()));
  }
}

}  // namespace
}  // namespace planmill::test
