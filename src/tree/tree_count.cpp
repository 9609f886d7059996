#include "planmill/tree/tree_count.hpp"

#include <cmath>
#include <limits>

namespace planmill {

double TreeCounter::log_count(const Region& region) {
  return log_count(region.size(), region.offsets().data(), region.adjacency().data());
}

double TreeCounter::log_count(const UnitGraph& graph) {
  const auto n = static_cast<std::uint32_t>(graph.unit_count());
  offsets_.assign(1, 0);
  adjacency_.clear();
  for (UnitIndex u = 0; u < n; ++u) {
    for (const UnitIndex w : graph.neighbors(u)) adjacency_.push_back(w);
    offsets_.push_back(static_cast<std::uint32_t>(adjacency_.size()));
  }
  return log_count(n, offsets_.data(), adjacency_.data());
}

double TreeCounter::log_count(std::uint32_t n, const std::uint32_t* offsets,
                              const std::uint32_t* adjacency) {
  if (n == 0) return -std::numeric_limits<double>::infinity();
  if (n == 1) return 0.0;
  // Connectivity first: a singular Laplacian minor may still factor with a tiny pivot.
  seen_.assign(n, 0);
  queue_.assign(1, 0);
  seen_[0] = 1;
  for (std::size_t head = 0; head < queue_.size(); ++head) {
    const std::uint32_t u = queue_[head];
    for (std::uint32_t k = offsets[u]; k < offsets[u + 1]; ++k) {
      const std::uint32_t w = adjacency[k];
      if (!seen_[w]) {
        seen_[w] = 1;
        queue_.push_back(w);
      }
    }
  }
  if (queue_.size() != n) return -std::numeric_limits<double>::infinity();

  // Reduced Laplacian: drop the last vertex's row and column.
  const std::uint32_t m = n - 1;
  triplets_.clear();
  for (std::uint32_t u = 0; u < m; ++u) {
    triplets_.emplace_back(u, u, static_cast<double>(offsets[u + 1] - offsets[u]));
    for (std::uint32_t k = offsets[u]; k < offsets[u + 1]; ++k) {
      const std::uint32_t w = adjacency[k];
      if (w < m) triplets_.emplace_back(u, w, -1.0);
    }
  }
  laplacian_.resize(m, m);
  laplacian_.setFromTriplets(triplets_.begin(), triplets_.end());
  cholesky_.compute(laplacian_);
  if (cholesky_.info() != Eigen::Success) return -std::numeric_limits<double>::infinity();
  double log_det = 0.0;
  const auto& factor = cholesky_.matrixL();
  const Eigen::SparseMatrix<double>& l = factor.nestedExpression();
  for (Eigen::Index j = 0; j < l.outerSize(); ++j) {
    for (Eigen::SparseMatrix<double>::InnerIterator it(l, j); it; ++it) {
      if (it.row() == j) log_det += std::log(it.value());
    }
  }
  return 2.0 * log_det;
}

double log_spanning_tree_count(const Region& region) {
  TreeCounter counter;
  return counter.log_count(region);
}

double log_spanning_tree_count(const UnitGraph& graph) {
  TreeCounter counter;
  return counter.log_count(graph);
}

}  // namespace planmill
