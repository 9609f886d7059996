#pragma once
// Spanning-tree counts τ as logarithms, by Kirchhoff's theorem: τ is the determinant of the
// Laplacian with one row and column removed (with edge weights, tree_weights.hpp: the weighted
// Laplacian, whose reduced determinant is τ_w = Σ_T Π_{e∈T} w(e), the weighted matrix-tree theorem), whose log comes from a sparse Cholesky factor
// (log det = 2 Σ log L_jj). Results: log τ; 0 for a single vertex; -infinity for a disconnected
// or empty region (connectivity is checked first). Relative accuracy is that of the
// factorisation, about 1e-12 for the regions seen here.
// A TreeCounter is used in a chain's hot loop: its buffers only grow, so once it has counted a
// region of the largest size it allocates nothing for regions up to that many vertices, unless
// one needs more than twice the factor entries seen so far (buffers sized by the fill take 2x
// headroom; sub-regions of planar-like maps stay well inside it).
#include <cstdint>
#include <span>
#include <vector>

#include "planmill/graph/adjacency.hpp"
#include "planmill/graph/unit_graph.hpp"
#include "planmill/tree/region.hpp"

namespace planmill {

class TreeCounter {
 public:
  // weights: one per adjacency entry (both directions of an edge alike), or empty for weight 1.
  [[nodiscard]] double log_count(AdjacencyView graph, std::span<const double> weights = {});
  // The region's own weights (Region::weights()).
  [[nodiscard]] double log_count(const Region& region) {
    return log_count(region.adjacency(), region.weights());
  }
  [[nodiscard]] double log_count(const UnitGraph& graph) { return log_count(graph.adjacency()); }

  // Entries of the last Cholesky factor L, diagonal included (for fill measurements).
  [[nodiscard]] std::size_t factor_entries() const noexcept { return factor_entries_; }
  // Bytes reserved by the buffers (for tests that check nothing grows).
  [[nodiscard]] std::size_t capacity_bytes() const noexcept;

 private:
  // Reverse Cuthill-McKee order of the graph's vertices into order_ (order_[k] = vertex
  // eliminated k-th); false when the graph is disconnected.
  bool order_vertices(AdjacencyView graph);
  // Breadth-first levels from root into queue_; returns the number of vertices reached and sets
  // last_level_begin to the start of the deepest level in queue_, depth to its level.
  std::uint32_t breadth_first(std::uint32_t root, AdjacencyView graph,
                              std::uint32_t& last_level_begin, std::uint32_t& depth);

  std::vector<std::uint32_t> order_, position_, queue_, level_;
  // Pattern of the strict upper triangle of the permuted reduced Laplacian, by columns (entry
  // -w of the edge; the diagonal is the weighted degree).
  std::vector<std::uint32_t> upper_start_, upper_row_;
  std::vector<double> upper_weight_, degree_;
  // Elimination tree and row patterns of L (symbolic); L by columns (numeric).
  std::vector<std::uint32_t> parent_, ancestor_, mark_, stack_, row_start_, row_pattern_;
  std::vector<std::uint32_t> column_start_, column_next_, l_row_;
  std::vector<double> l_value_, work_;
  std::size_t factor_entries_ = 0;
};

[[nodiscard]] double log_spanning_tree_count(const Region& region);
[[nodiscard]] double log_spanning_tree_count(const UnitGraph& graph);

}  // namespace planmill
