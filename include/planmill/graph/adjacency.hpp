#pragma once
// AdjacencyView: the one way planmill walks a graph's neighbours. A borrowed CSR adjacency: the
// neighbours of vertex v are targets[offsets[v] .. offsets[v + 1]), and, when the owner keeps
// them, edge_ids[k] is the undirected edge behind targets[k].
// The owners keep their own arrays (UnitGraph: the map; Region: a subgraph in local indices,
// rebuilt in the hot loop without allocating; UnitAdjacency: what a plan file stores) and hand
// out this view; what walks neighbours (Wilson's algorithm, tree counts, the codec's graph model)
// takes it.
// Promises: copying a view copies three spans and never allocates; a view stays valid while the
// arrays it was made from are neither changed nor freed. Nothing is checked on construction:
// valid_for() checks the structure of a view read from outside.
#include <cstddef>
#include <cstdint>
#include <span>

#include "planmill/base/ids.hpp"

namespace planmill {

class AdjacencyView {
 public:
  using Vertex = std::uint32_t;
  using Offset = std::uint64_t;  // 64-bit as in plan files (docs/format.md, /unit_adjacency)

  AdjacencyView() = default;  // no vertices
  // offsets: one entry per vertex and one more, or none at all for no vertices. edge_ids: empty,
  // or one per entry of targets.
  AdjacencyView(std::span<const Offset> offsets, std::span<const Vertex> targets,
                std::span<const EdgeIndex> edge_ids = {}) noexcept
      : offsets_(offsets), targets_(targets), edge_ids_(edge_ids) {}

  [[nodiscard]] std::size_t vertex_count() const noexcept {
    return offsets_.empty() ? 0 : offsets_.size() - 1;
  }
  // Entries of all neighbour lists together: each undirected edge counts twice.
  [[nodiscard]] std::size_t entry_count() const noexcept { return targets_.size(); }

  [[nodiscard]] std::span<const Vertex> neighbors(Vertex v) const noexcept {
    return {targets_.data() + offsets_[v], targets_.data() + offsets_[v + 1]};
  }
  [[nodiscard]] std::uint32_t degree(Vertex v) const noexcept {
    return static_cast<std::uint32_t>(offsets_[v + 1] - offsets_[v]);
  }
  [[nodiscard]] bool has_edge_ids() const noexcept { return !edge_ids_.empty(); }
  // The edge behind each entry of neighbors(v), in the same order (only when has_edge_ids()).
  [[nodiscard]] std::span<const EdgeIndex> incident_edges(Vertex v) const noexcept {
    return {edge_ids_.data() + offsets_[v], edge_ids_.data() + offsets_[v + 1]};
  }

  // The arrays themselves, for loops that index them directly.
  [[nodiscard]] std::span<const Offset> offsets() const noexcept { return offsets_; }
  [[nodiscard]] std::span<const Vertex> targets() const noexcept { return targets_; }

  [[nodiscard]] std::uint32_t max_degree() const noexcept;
  // offsets has vertices + 1 entries, starts at 0, never decreases and ends at the number of
  // targets; every target is below vertices; edge ids are absent or one per target.
  [[nodiscard]] bool valid_for(std::size_t vertices) const noexcept;

 private:
  std::span<const Offset> offsets_;
  std::span<const Vertex> targets_;
  std::span<const EdgeIndex> edge_ids_;
};

}  // namespace planmill
