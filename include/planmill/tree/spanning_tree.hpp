#pragma once
// SpanningTreeSampler: exactly uniform (or weighted) spanning trees of a Region by Wilson's
// algorithm (loop-erased random walks into the growing tree; Wilson, STOC 1996), plus what a
// recombination step needs from the tree: subtree populations, the balanced cut edges, and
// the vertex set on one side of a cut.
//
// Promises: the tree is uniform over all spanning trees of the region for any fixed root given to
// sample(region, rng, root) (the law of the tree does not depend on the root: Wilson 1996), so
// sample(region, rng) roots it where the walk ends soonest among a few cheap candidates:
// chosen_root(), a rule of the region alone, drawn from no random stream. A region with edge weights
// (Region::weights(), tree_weights.hpp) is walked with steps in proportion to the weights, which
// draws a tree T with probability prod_{e in T} w(e) / tau_w (Wilson 1996; Propp and Wilson 1998),
// again for any root. The region must be connected (merged districts are); otherwise sample()
// throws std::invalid_argument. Once the buffers have grown to the largest region seen, nothing
// here allocates.
//
// Why that root: Wilson's walk takes sum_v pi(v) (E_v T_r + E_r T_v) steps on average (Wilson
// 1996), i.e. Kemeny's constant plus E_pi T_r, the stationary walk's hitting time of the root r,
// which is smallest at central units of high degree. A region built from a cut edge
// (Region::build_from_seeds) has that edge's end at local 0, on the seam of the two districts,
// near the middle of the merged region; the root is the unit of highest degree among local 0 and
// its neighbours (first in local order on ties). Figures: docs/performance.md, "Spanning trees".
#include <cstdint>
#include <limits>
#include <span>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/graph/adjacency.hpp"
#include "planmill/tree/region.hpp"

namespace planmill {

class SpanningTreeSampler {
 public:
  static constexpr std::uint32_t kNoParent = std::numeric_limits<std::uint32_t>::max();

  void sample(const Region& region, Rng& rng);  // rooted at chosen_root(region.adjacency())
  void sample(const Region& region, Rng& rng, std::uint32_t root);
  // The root sample(region, rng) uses: the highest degree among vertex 0 and its neighbours, the
  // first in vertex order on ties. The graph must have a vertex.
  [[nodiscard]] static std::uint32_t chosen_root(AdjacencyView graph) noexcept;
  // The same on any graph: its adjacency, a population per vertex, and a weight per adjacency
  // entry (both directions of an edge the same; empty: every edge weighs 1).
  void sample(AdjacencyView graph, std::span<const std::int64_t> population, Rng& rng,
              std::uint32_t root, std::span<const double> weights = {});

  [[nodiscard]] std::uint32_t size() const noexcept {
    return static_cast<std::uint32_t>(parent_.size());
  }
  [[nodiscard]] std::uint32_t root() const noexcept { return root_; }
  // Parent of each local vertex in the tree; kNoParent for the root.
  [[nodiscard]] std::span<const std::uint32_t> parents() const noexcept { return parent_; }
  // Every local vertex once, each after its parent (root first).
  [[nodiscard]] std::span<const std::uint32_t> order() const noexcept { return order_; }
  // Population of the subtree hanging from each vertex (the root's is the region total).
  [[nodiscard]] std::span<const std::int64_t> subtree_population() const noexcept {
    return subtree_;
  }
  // Random-walk steps (neighbour draws) the last sample() took.
  [[nodiscard]] std::uint64_t walk_steps() const noexcept { return walk_steps_; }

  // The child-side vertices v of tree edges (v, parent(v)) whose removal leaves both sides with a
  // population in [lo, hi], in increasing local index. Valid until the next call.
  [[nodiscard]] std::span<const std::uint32_t> balanced_cuts(std::int64_t lo, std::int64_t hi);

  // out[v] = 1 if v lies in the subtree of `child` (the side cut off with the edge to its parent),
  // else 0. out.size() must be at least size().
  void mark_side(std::uint32_t child, std::span<std::uint8_t> out) const noexcept;

  [[nodiscard]] std::size_t capacity_bytes() const noexcept;

 private:
  void draw(AdjacencyView graph, std::span<const std::int64_t> population, Rng& rng, std::uint32_t root,
            std::span<const double> weights, bool known_connected);

  std::uint32_t root_ = 0;
  std::uint64_t walk_steps_ = 0;
  std::int64_t total_ = 0;
  std::vector<std::uint8_t> in_tree_;
  std::vector<std::uint32_t> next_;
  std::vector<std::uint32_t> parent_;
  std::vector<std::uint32_t> order_;
  std::vector<std::int64_t> subtree_;
  std::vector<std::uint32_t> cuts_;
  std::vector<std::uint32_t> queue_;  // connectivity check
};

}  // namespace planmill
