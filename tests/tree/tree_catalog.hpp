#pragma once
// Every spanning tree of a small region, found by brute force over edge subsets: the catalogue the
// sampler tests count draws against.
#include <gtest/gtest.h>

#include <bit>
#include <cstdint>
#include <map>
#include <numeric>
#include <span>
#include <utility>
#include <vector>

#include "planmill/tree/region.hpp"
#include "planmill/tree/spanning_tree.hpp"

namespace planmill::test {

struct UnionFind {
  std::vector<std::uint32_t> up;
  explicit UnionFind(std::uint32_t n) : up(n) { std::iota(up.begin(), up.end(), 0U); }
  std::uint32_t find(std::uint32_t x) {
    while (up[x] != x) x = up[x] = up[up[x]];
    return x;
  }
  bool unite(std::uint32_t a, std::uint32_t b) {
    a = find(a);
    b = find(b);
    if (a == b) return false;
    up[a] = b;
    return true;
  }
};

// Every spanning tree of a small region (at most 63 edges), found by trying all edge subsets of
// size n - 1; a tree is identified canonically by the bit set of its region edges.
class TreeCatalog {
 public:
  explicit TreeCatalog(const Region& region) : n_(region.size()), edge_id_(n_ * n_, -1) {
    for (std::uint32_t u = 0; u < n_; ++u) {
      for (const std::uint32_t w : region.neighbors(u)) {
        if (u < w) {
          edge_id_[u * n_ + w] = edge_id_[w * n_ + u] = static_cast<int>(edges_.size());
          edges_.emplace_back(u, w);
        }
      }
    }
    const auto m = static_cast<std::uint32_t>(edges_.size());
    for (std::uint64_t mask = 0; mask < (std::uint64_t{1} << m); ++mask) {
      if (std::popcount(mask) != static_cast<int>(n_ - 1)) continue;
      UnionFind uf(n_);
      bool acyclic = true;
      for (std::uint32_t e = 0; e < m && acyclic; ++e) {
        if (mask >> e & 1U) acyclic = uf.unite(edges_[e].first, edges_[e].second);
      }
      if (acyclic) index_.emplace(mask, index_.size());
    }
  }
  [[nodiscard]] std::size_t tree_count() const { return index_.size(); }
  [[nodiscard]] std::uint32_t edge_count() const {
    return static_cast<std::uint32_t>(edges_.size());
  }
  [[nodiscard]] std::pair<std::uint32_t, std::uint32_t> edge(std::uint32_t e) const {
    return edges_[e];
  }

  // Index of the sampled tree; fails the test if the parents are not a spanning tree.
  std::size_t index_of(std::span<const std::uint32_t> parent) const {
    std::uint64_t mask = 0;
    for (std::uint32_t v = 0; v < n_; ++v) {
      if (parent[v] == SpanningTreeSampler::kNoParent) continue;
      const int e = edge_id_[v * n_ + parent[v]];
      EXPECT_GE(e, 0) << "tree edge " << v << "-" << parent[v] << " is not in the region";
      if (e >= 0) mask |= std::uint64_t{1} << e;
    }
    const auto it = index_.find(mask);
    EXPECT_NE(it, index_.end()) << "sampled edges are not a spanning tree";
    return it == index_.end() ? 0 : it->second;
  }
  std::size_t index_of_mask(std::uint64_t mask) const { return index_.at(mask); }
  // The edge bit set of each tree, by tree index.
  [[nodiscard]] std::vector<std::uint64_t> masks() const {
    std::vector<std::uint64_t> out(index_.size());
    for (const auto& [mask, i] : index_) out[i] = mask;
    return out;
  }

 private:
  std::uint32_t n_;
  std::vector<int> edge_id_;
  std::vector<std::pair<std::uint32_t, std::uint32_t>> edges_;
  std::map<std::uint64_t, std::size_t> index_;
};

}  // namespace planmill::test
