#pragma once
// Spanning-tree counts τ as logarithms, by Kirchhoff's theorem: τ is the determinant of the
// Laplacian with one row and column removed, whose log comes from a sparse Cholesky factor
// (log det = 2 Σ log L_ii). Results: log τ; 0 for a single vertex; -infinity for a disconnected
// or empty region. Relative accuracy is that of the factorisation, about 1e-12 for the regions
// seen here.
#include <Eigen/SparseCholesky>
#include <Eigen/SparseCore>
#include <cstdint>
#include <vector>

#include "planmill/graph/unit_graph.hpp"
#include "planmill/tree/region.hpp"

namespace planmill {

// Holds the matrix and the solver so repeated counts reuse their storage.
class TreeCounter {
 public:
  [[nodiscard]] double log_count(const Region& region);
  [[nodiscard]] double log_count(const UnitGraph& graph);

 private:
  // Local CSR adjacency over n vertices.
  double log_count(std::uint32_t n, const std::uint32_t* offsets, const std::uint32_t* adjacency);

  std::vector<Eigen::Triplet<double>> triplets_;
  Eigen::SparseMatrix<double> laplacian_;
  Eigen::SimplicialLLT<Eigen::SparseMatrix<double>> cholesky_;
  std::vector<std::uint8_t> seen_;
  std::vector<std::uint32_t> queue_;
  std::vector<std::uint32_t> offsets_, adjacency_;  // for the UnitGraph overload
};

[[nodiscard]] double log_spanning_tree_count(const Region& region);
[[nodiscard]] double log_spanning_tree_count(const UnitGraph& graph);

}  // namespace planmill
