#include "planmill/graph/adjacency.hpp"

#include <algorithm>

namespace planmill {

std::uint32_t AdjacencyView::max_degree() const noexcept {
  std::uint32_t most = 0;
  for (Vertex v = 0; v < vertex_count(); ++v) most = std::max(most, degree(v));
  return most;
}

bool AdjacencyView::valid_for(std::size_t vertices) const noexcept {
  if (offsets_.size() != vertices + 1 || offsets_.front() != 0 ||
      offsets_.back() != targets_.size())
    return false;
  if (!edge_ids_.empty() && edge_ids_.size() != targets_.size()) return false;
  for (std::size_t v = 0; v < vertices; ++v)
    if (offsets_[v + 1] < offsets_[v]) return false;
  return std::all_of(targets_.begin(), targets_.end(), [&](Vertex w) { return w < vertices; });
}

}  // namespace planmill
