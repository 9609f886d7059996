#pragma once
// LineFollowingTree (private to seed): a random spanning tree of a Region that follows county and
// municipality lines, for first plans under caps on them. Kruskal's algorithm on random keys, with
// every edge that crosses a county line after every edge inside one (and a town line likewise, one
// rank lower), so that each county is spanned inside itself before counties are joined: cutting
// one of the joining edges splits no county. Its law is not stated (a seed needs none); its cost
// is a sort of the region's edges, whatever the weights, where Wilson's walks on weighted trees
// take about as many steps as the weights are large.
#include <algorithm>
#include <cstdint>
#include <numeric>
#include <span>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/graph/unit_graph.hpp"
#include "planmill/tree/region.hpp"

namespace planmill::seed {

class LineFollowingTree {
 public:
  static constexpr std::uint32_t kNone = 0xFFFFFFFFU;

  void sample(const Region& region, const UnitGraph& graph, bool counties, bool towns, Rng& rng) {
    const std::uint32_t n = region.size();
    edges_.clear();
    for (std::uint32_t v = 0; v < n; ++v)
      for (const std::uint32_t w : region.neighbors(v)) {
        if (w <= v) continue;
        const UnitIndex a = region.global(v), b = region.global(w);
        double key = uniform01(rng);
        if (counties && graph.counties().code[a] != graph.counties().code[b]) key += 4.0;
        if (towns && (graph.municipalities().code[a] != graph.municipalities().code[b] ||
                      graph.municipalities().code[a] == UnitCodes::kNone))
          key += 2.0;
        edges_.push_back({key, v, w});
      }
    std::sort(edges_.begin(), edges_.end(), [](const Edge& x, const Edge& y) { return x.key < y.key; });
    set_.resize(n);
    std::iota(set_.begin(), set_.end(), 0U);
    head_.assign(n, kNone);
    link_.resize(2 * static_cast<std::size_t>(n));
    target_.resize(2 * static_cast<std::size_t>(n));
    std::uint32_t links = 0;
    for (const Edge& e : edges_) {
      const std::uint32_t a = find(e.a), b = find(e.b);
      if (a == b) continue;
      set_[a] = b;
      for (const auto& [from, to] : {std::pair{e.a, e.b}, std::pair{e.b, e.a}}) {
        target_[links] = to;
        link_[links] = head_[from];
        head_[from] = links++;
      }
    }
    // Parents and a root-first order from a uniform root, then subtree populations.
    root_ = uniform_below(rng, n);
    parent_.assign(n, kNone);
    order_.clear();
    order_.push_back(root_);
    seen_.assign(n, 0);
    seen_[root_] = 1;
    for (std::size_t i = 0; i < order_.size(); ++i)
      for (std::uint32_t l = head_[order_[i]]; l != kNone; l = link_[l])
        if (const std::uint32_t w = target_[l]; !seen_[w]) {
          seen_[w] = 1;
          parent_[w] = order_[i];
          order_.push_back(w);
        }
    subtree_.assign(region.populations().begin(), region.populations().end());
    for (std::size_t i = order_.size(); i-- > 1;) subtree_[parent_[order_[i]]] += subtree_[order_[i]];
  }

  [[nodiscard]] std::uint32_t root() const noexcept { return root_; }
  [[nodiscard]] std::span<const std::int64_t> subtree_population() const noexcept { return subtree_; }
  // out[v] = 1 if v lies in the subtree of `child`, else 0.
  void mark_side(std::uint32_t child, std::span<std::uint8_t> out) const noexcept {
    for (const std::uint32_t v : order_) out[v] = v == child || (parent_[v] != kNone && out[parent_[v]] != 0);
  }

 private:
  struct Edge {
    double key;
    std::uint32_t a, b;
  };
  std::uint32_t find(std::uint32_t v) noexcept {
    while (set_[v] != v) v = set_[v] = set_[set_[v]];
    return v;
  }
  std::uint32_t root_ = 0;
  std::vector<Edge> edges_;
  std::vector<std::uint32_t> set_, head_, link_, target_, parent_, order_;
  std::vector<std::uint8_t> seen_;
  std::vector<std::int64_t> subtree_;
};

}  // namespace planmill::seed
