// Spanning-tree counts by log-determinant against published exact counts.
#include "planmill/tree/tree_count.hpp"

#include <gtest/gtest.h>

#include <Eigen/SparseCholesky>
#include <Eigen/SparseCore>
#include <algorithm>
#include <cmath>
#include <limits>
#include <string>
#include <vector>

#include "planmill/tree/region.hpp"
#include "random_regions.hpp"
#include "small_graphs.hpp"

namespace planmill::test {
namespace {

// log τ is compared in absolute terms: 1e-9 is far below the gap log(τ+1) - log(τ) for every
// count here, so the test pins the exact integer.
constexpr double kLogTolerance = 1e-9;

double log_count(std::uint32_t n, const EdgeList& edges) {
  const UnitGraph g = graph_from_edges(n, edges);
  return log_spanning_tree_count(g);
}

TEST(TreeCount, SquareGridsMatchOeisA007341) {
  // OEIS A007341: spanning trees of the n x n grid graph.
  const double expected[] = {1.0, 4.0, 192.0, 100352.0, 557568000.0, 32565539635200.0};
  for (std::uint32_t n = 1; n <= 6; ++n) {
    EXPECT_NEAR(log_count(n * n, grid_edges(n, n)), std::log(expected[n - 1]), kLogTolerance)
        << n << "x" << n;
  }
}

TEST(TreeCount, LaddersMatchOeisA001353) {
  // OEIS A001353: spanning trees of the 2 x n ladder: 1, 4, 15, 56, 209, 780.
  const double expected[] = {1.0, 4.0, 15.0, 56.0, 209.0, 780.0};
  for (std::uint32_t n = 1; n <= 6; ++n) {
    EXPECT_NEAR(log_count(2 * n, grid_edges(2, n)), std::log(expected[n - 1]), kLogTolerance)
        << "2x" << n;
  }
}

TEST(TreeCount, CompleteGraphsMatchCayley) {
  // Cayley's formula: τ(K_n) = n^(n-2).
  for (std::uint32_t n = 2; n <= 40; ++n) {
    EXPECT_NEAR(log_count(n, complete_edges(n)), (n - 2.0) * std::log(n), kLogTolerance * n)
        << "K_" << n;
  }
}

TEST(TreeCount, CyclesHaveNTrees) {
  // C_n has n spanning trees (drop any one edge).
  for (std::uint32_t n = 3; n <= 30; ++n) {
    EXPECT_NEAR(log_count(n, cycle_edges(n)), std::log(n), kLogTolerance) << "C_" << n;
  }
}

TEST(TreeCount, CompleteBipartiteGraphs) {
  // Scoins' formula: τ(K_{m,n}) = m^(n-1) n^(m-1).
  for (std::uint32_t m = 1; m <= 7; ++m) {
    for (std::uint32_t n = 1; n <= 7; ++n) {
      const double expected = (n - 1.0) * std::log(m) + (m - 1.0) * std::log(n);
      EXPECT_NEAR(log_count(m + n, complete_bipartite_edges(m, n)), expected, kLogTolerance)
          << "K_" << m << "," << n;
    }
  }
}

TEST(TreeCount, PetersenGraphAndCube) {
  // Petersen graph: 2000 spanning trees (a standard value, from memory); cube Q_3: 384 (formula below).
  EXPECT_NEAR(log_count(10, petersen_edges()), std::log(2000.0), kLogTolerance);
  EXPECT_NEAR(log_count(8, hypercube_edges(3)), std::log(384.0), kLogTolerance);
  // Hypercube formula τ(Q_d) = 2^(2^d - d - 1) Π_{k=1..d} k^C(d,k) (from the Laplacian
  // eigenvalues 2k with multiplicity C(d,k)) [from memory]; gives 384 for d = 3.
  for (std::uint32_t d = 1; d <= 7; ++d) {
    double expected = (std::ldexp(1.0, static_cast<int>(d)) - d - 1.0) * std::log(2.0);
    double binomial = 1.0;
    for (std::uint32_t k = 1; k <= d; ++k) {
      binomial = binomial * (d - k + 1) / k;
      expected += binomial * std::log(static_cast<double>(k));
    }
    EXPECT_NEAR(log_count(1U << d, hypercube_edges(d)), expected, kLogTolerance * (1U << d))
        << "Q_" << d;
  }
}

TEST(TreeCount, SingleVertexAndDisconnected) {
  EXPECT_EQ(log_count(1, {}), 0.0);
  EXPECT_EQ(log_count(4, {{0, 1}, {2, 3}}), -std::numeric_limits<double>::infinity());
  EXPECT_EQ(log_count(3, {{0, 1}}), -std::numeric_limits<double>::infinity());
}

TEST(TreeCount, RegionOverloadCountsTheInducedSubgraph) {
  // Units 0..8 of a 4x4 grid form the top two rows plus unit 8: a 2x4 ladder with a pendant,
  // τ = 56 (OEIS A001353, 2x4 ladder) x 1.
  const UnitGraph g = graph_from_edges(16, grid_edges(4, 4));
  const std::vector<UnitIndex> units = {8, 0, 1, 2, 3, 4, 5, 6, 7};
  Region region;
  region.build(g, units);
  TreeCounter counter;
  EXPECT_NEAR(counter.log_count(region), std::log(56.0), kLogTolerance);
  // Reusing the counter on a different region: the 3x3 block 0,1,2,4,5,6,8,9,10 has 192.
  const std::vector<UnitIndex> block = {0, 1, 2, 4, 5, 6, 8, 9, 10};
  region.build(g, block);
  EXPECT_NEAR(counter.log_count(region), std::log(192.0), kLogTolerance);
  // Corner units 0 and 15 only: disconnected.
  const std::vector<UnitIndex> corners = {0, 15};
  region.build(g, corners);
  EXPECT_EQ(counter.log_count(region), -std::numeric_limits<double>::infinity());
}

// Reference: Eigen 3's SimplicialLLT (Debian's libeigen3-dev, its own AMD ordering) on the same
// reduced Laplacian, last local vertex removed; log det = 2 Σ log L_jj.
double eigen_log_count(const Region& region) {
  const auto m = static_cast<int>(region.size()) - 1;
  std::vector<Eigen::Triplet<double>> triplets;
  for (int u = 0; u < m; ++u) {
    triplets.emplace_back(u, u, static_cast<double>(region.degree(u)));
    for (const std::uint32_t w : region.neighbors(u))
      if (static_cast<int>(w) < m) triplets.emplace_back(u, w, -1.0);
  }
  Eigen::SparseMatrix<double> laplacian(m, m);
  laplacian.setFromTriplets(triplets.begin(), triplets.end());
  const Eigen::SimplicialLLT<Eigen::SparseMatrix<double>> cholesky(laplacian);
  EXPECT_EQ(cholesky.info(), Eigen::Success);
  double log_det = 0.0;
  const Eigen::SparseMatrix<double>& l = cholesky.matrixL().nestedExpression();
  for (int j = 0; j < m; ++j) log_det += std::log(l.coeff(j, j));
  return 2.0 * log_det;
}

// Relative 1e-10 (absolute for log τ below 1, e.g. trees with log τ = 0): both factorisations
// are backward stable, so they agree to a few ulps times the growth of the pivots.
void expect_matches_eigen(double ours, double reference, const std::string& what) {
  EXPECT_NEAR(ours, reference, 1e-10 * std::max(1.0, std::abs(reference))) << what;
}

TEST(TreeCount, MatchesEigenOnRandomPlanarRegions) {
  Rng rng = make_stream(2024, 5);
  TreeCounter counter;  // reused across sizes, as in a chain
  Region region;
  std::size_t largest = 0;
  for (int trial = 0; trial < 400; ++trial) {
    const std::uint32_t rows = 2 + uniform_below(rng, 30), cols = 2 + uniform_below(rng, 30);
    const UnitGraph g = planar_grid(rows, cols, uniform01(rng), rng);
    const std::vector<UnitIndex> units = connected_region(g, 0.35 * uniform01(rng), rng);
    region.build(g, units);
    largest = std::max<std::size_t>(largest, units.size());
    if (units.size() < 2) {
      EXPECT_EQ(counter.log_count(region), 0.0);
      continue;
    }
    expect_matches_eigen(counter.log_count(region), eigen_log_count(region),
                         "trial " + std::to_string(trial) + ", " +
                             std::to_string(units.size()) + " units");
  }
  EXPECT_GT(largest, 500U);  // the trials did reach large regions
}

TEST(TreeCount, MatchesEigenOnRegionsOfTwoThousandUnits) {
  Rng rng = make_stream(2024, 6);
  TreeCounter counter;
  Region region;
  for (int trial = 0; trial < 4; ++trial) {
    const UnitGraph g = planar_grid(46, 46, 0.6, rng);
    const std::vector<UnitIndex> units = connected_region(g, 0.03, rng);
    region.build(g, units);
    EXPECT_GT(units.size(), 1500U);
    expect_matches_eigen(counter.log_count(region), eigen_log_count(region),
                         std::to_string(units.size()) + " units");
  }
}

TEST(TreeCount, RandomUnitSetsAreMinusInfinityExactlyWhenDisconnected) {
  // Kept units of a holed grid, without taking a component: disconnected about half the time.
  Rng rng = make_stream(2024, 7);
  TreeCounter counter;
  Region region;
  int disconnected = 0, connected = 0;
  for (int trial = 0; trial < 300; ++trial) {
    const std::uint32_t rows = 2 + uniform_below(rng, 6), cols = 2 + uniform_below(rng, 6);
    const UnitGraph g = planar_grid(rows, cols, 0.5, rng);
    std::vector<UnitIndex> units;
    for (UnitIndex u = 0; u < rows * cols; ++u)
      if (uniform01(rng) >= 0.3) units.push_back(u);
    if (units.empty()) continue;
    region.build(g, units);
    // Own connectivity check: union-find over the region's edges.
    std::vector<std::uint32_t> root(region.size());
    for (std::uint32_t i = 0; i < region.size(); ++i) root[i] = i;
    const auto find = [&root](std::uint32_t i) {
      while (root[i] != i) i = root[i] = root[root[i]];
      return i;
    };
    std::uint32_t components = region.size();
    for (std::uint32_t i = 0; i < region.size(); ++i)
      for (const std::uint32_t w : region.neighbors(i))
        if (find(i) != find(w)) {
          root[find(i)] = find(w);
          --components;
        }
    const double ours = counter.log_count(region);
    if (components > 1) {
      ++disconnected;
      EXPECT_EQ(ours, -std::numeric_limits<double>::infinity()) << "trial " << trial;
    } else if (region.size() > 1) {
      ++connected;
      expect_matches_eigen(ours, eigen_log_count(region), "trial " + std::to_string(trial));
    }
  }
  EXPECT_GT(disconnected, 30);
  EXPECT_GT(connected, 30);
}

}  // namespace
}  // namespace planmill::test
