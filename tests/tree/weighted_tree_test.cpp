// Weighted spanning trees (tree_weights.hpp): Wilson's algorithm with steps in proportion to edge
// weights draws each tree with probability prod w(e) / tau_w (Wilson 1996), checked by chi-square
// against every tree of small regions enumerated by brute force; the weighted matrix-tree count
// against hand-worked examples and brute-force sums over the same catalogues.
#include <gtest/gtest.h>

#include <cmath>
#include <cstdint>
#include <string>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/selftest/selftest.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/spanning_tree.hpp"
#include "planmill/tree/tree_count.hpp"
#include "planmill/tree/tree_weights.hpp"
#include "small_graphs.hpp"
#include "tree_catalog.hpp"

namespace planmill::test {
namespace {

constexpr double kPValueThreshold = 1e-4;  // seeds are fixed: a failure is a bug

// Weight of region edge (u, w), read from the region's own weight array.
double edge_weight(const Region& region, std::uint32_t u, std::uint32_t w) {
  const auto neighbors = region.neighbors(u);
  const auto first = region.adjacency().offsets()[u];
  for (std::size_t t = 0; t < neighbors.size(); ++t)
    if (neighbors[t] == w) return region.weights().empty() ? 1.0 : region.weights()[first + t];
  ADD_FAILURE() << "no edge " << u << "-" << w;
  return 0.0;
}

// prod_{e in T} w(e) for every tree of the catalogue, by tree index.
std::vector<double> tree_weights_of(const Region& region, const TreeCatalog& catalog) {
  std::vector<double> out;
  for (const std::uint64_t mask : catalog.masks()) {
    double product = 1.0;
    for (std::uint32_t e = 0; e < catalog.edge_count(); ++e)
      if (mask >> e & 1U) product *= edge_weight(region, catalog.edge(e).first, catalog.edge(e).second);
    out.push_back(product);
  }
  return out;
}

struct Fit {
  double statistic = 0, p_value = 1;
};

// Chi-square of draws against expected frequencies proportional to the tree weights.
Fit weighted_chi_square(const Region& region, const TreeCatalog& catalog, std::size_t draws, std::uint64_t seed,
                        bool fixed_root) {
  const std::vector<double> weight = tree_weights_of(region, catalog);
  double total = 0;
  for (const double w : weight) total += w;
  std::vector<std::uint64_t> counts(catalog.tree_count(), 0);
  SpanningTreeSampler sampler;
  Rng rng = make_stream(seed, 0);
  for (std::size_t i = 0; i < draws; ++i) {
    if (fixed_root) sampler.sample(region, rng, region.size() - 1);
    else sampler.sample(region, rng);
    ++counts[catalog.index_of(sampler.parents())];
  }
  Fit fit;
  for (std::size_t t = 0; t < counts.size(); ++t) {
    const double expected = static_cast<double>(draws) * weight[t] / total;
    const double diff = static_cast<double>(counts[t]) - expected;
    fit.statistic += diff * diff / expected;
  }
  fit.p_value = chi_square_upper_tail(fit.statistic, static_cast<double>(counts.size() - 1));
  return fit;
}

// The 3x3 grid with counties {left column + centre}, {the rest} and one municipality across
// them, as a region of a one-district plan.
struct CountyBlock {
  GraphHandle graph;
  Region region;
  explicit CountyBlock(TreeWeights weights) {
    GraphExtras x;
    x.county = {0, 1, 1, 0, 0, 1, 0, 1, 1};
    x.municipality = {0, 0, UnitCodes::kNone, 0, 0, 1, 1, 1, 1};
    graph = share_graph(grid(3, 3, x));
    region.set_weights(weights);
    region.build(Plan(graph, 1, std::vector<DistrictIndex>(9, 0)), 0, 0);
  }
};

TEST(WeightedWilson, TreeFrequenciesFollowTheProductOfWeights) {
  for (const TreeWeights w : {TreeWeights{4.0, 1.0}, TreeWeights{2.0, 3.0}}) {
    CountyBlock block(w);
    const TreeCatalog catalog(block.region);
    ASSERT_EQ(catalog.tree_count(), 192U);  // OEIS A007341, 3x3 grid
    ASSERT_EQ(block.region.weights().size(), 24U);
    const Fit any_root = weighted_chi_square(block.region, catalog, 400 * 192, 41, false);
    EXPECT_GT(any_root.p_value, kPValueThreshold) << "X2=" << any_root.statistic;
    const Fit fixed = weighted_chi_square(block.region, catalog, 400 * 192, 42, true);
    EXPECT_GT(fixed.p_value, kPValueThreshold) << "X2=" << fixed.statistic;
  }
}

TEST(WeightedWilson, TheSameTestRejectsUnweightedDraws) {
  // Power: uniform trees scored against the weighted law (county weight 4) must fail.
  CountyBlock weighted({4.0, 1.0});
  CountyBlock plain({1.0, 1.0});
  const TreeCatalog catalog(weighted.region);
  const std::vector<double> weight = tree_weights_of(weighted.region, catalog);
  double total = 0;
  for (const double w : weight) total += w;
  std::vector<std::uint64_t> counts(catalog.tree_count(), 0);
  SpanningTreeSampler sampler;
  Rng rng = make_stream(43, 0);
  const std::size_t draws = 400 * 192;
  for (std::size_t i = 0; i < draws; ++i) {
    sampler.sample(plain.region, rng);
    ++counts[catalog.index_of(sampler.parents())];
  }
  double statistic = 0;
  for (std::size_t t = 0; t < counts.size(); ++t) {
    const double expected = static_cast<double>(draws) * weight[t] / total;
    statistic += (static_cast<double>(counts[t]) - expected) * (static_cast<double>(counts[t]) - expected) / expected;
  }
  EXPECT_LT(chi_square_upper_tail(statistic, 191.0), kPValueThreshold) << "X2=" << statistic;
}

TEST(WeightedTreeCount, MatchesTheBruteForceSumOverTrees) {
  // tau_w = sum over the catalogue of prod w(e): the weighted matrix-tree theorem, checked
  // against the definition.
  for (const TreeWeights w : {TreeWeights{4.0, 1.0}, TreeWeights{2.0, 3.0}, TreeWeights{1.0, 1.0}}) {
    CountyBlock block(w);
    const TreeCatalog catalog(block.region);
    double sum = 0;
    for (const double x : tree_weights_of(block.region, catalog)) sum += x;
    TreeCounter counter;
    EXPECT_NEAR(counter.log_count(block.region), std::log(sum), 1e-12) << w.county << " " << w.municipality;
  }
}

TEST(WeightedTreeCount, HandWorkedTriangleAndFourCycle) {
  // Hand-worked: a triangle with edge weights a, b, c has the trees {a,b}, {b,c}, {c,a}, so
  // tau_w = ab + bc + ca; a 4-cycle has the four paths left by dropping one edge, tau_w = the sum
  // of the products of three of its four weights.
  GraphExtras tri;
  tri.county = {0, 0, 1};       // edge 0-1 inside a county: weight 5
  tri.municipality = {0, 1, 1};  // edge 1-2 inside a town: weight 3; edge 0-2: 1
  const GraphHandle triangle = share_graph(build_graph(3, complete_edges(3), tri));
  Region region;
  region.set_weights({5.0, 3.0});
  region.build(Plan(triangle, 1, std::vector<DistrictIndex>(3, 0)), 0, 0);
  TreeCounter counter;
  EXPECT_NEAR(counter.log_count(region), std::log(5.0 * 3 + 3 * 1 + 1 * 5), 1e-13);

  GraphExtras sq;
  sq.county = {0, 0, 0, 1};  // cycle 0-1-2-3-0: edges 0-1 and 1-2 weigh 2.5, 2-3 and 3-0 weigh 1
  const GraphHandle cycle = share_graph(build_graph(4, cycle_edges(4), sq));
  region.set_weights({2.5, 1.0});
  region.build(Plan(cycle, 1, std::vector<DistrictIndex>(4, 0)), 0, 0);
  const double a = 2.5, b = 2.5, c = 1.0, d = 1.0;
  EXPECT_NEAR(counter.log_count(region), std::log(a * b * c + a * b * d + a * c * d + b * c * d), 1e-13);
}

TEST(WeightedTreeCount, TrivialWeightsLeaveTheRegionUnweighted) {
  CountyBlock block({1.0, 1.0});
  EXPECT_TRUE(block.region.weights().empty());
  TreeCounter counter;
  EXPECT_NEAR(counter.log_count(block.region), std::log(192.0), 1e-12);
}

}  // namespace
}  // namespace planmill::test
