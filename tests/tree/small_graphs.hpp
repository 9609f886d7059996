#pragma once
// Small named graphs for the tree tests, built through UnitGraphBuilder (unit ids "0", "1", ...).
#include <cstdint>
#include <string>
#include <utility>
#include <vector>

#include "planmill/graph/unit_graph.hpp"

namespace planmill::test {

using EdgeList = std::vector<std::pair<UnitIndex, UnitIndex>>;

inline UnitGraph graph_from_edges(std::uint32_t n, const EdgeList& edges,
                                  const std::vector<std::int64_t>& population = {}) {
  UnitGraphBuilder builder;
  for (std::uint32_t u = 0; u < n; ++u) {
    (void)builder.add_unit(std::to_string(u), population.empty() ? 1 : population[u]);
  }
  for (const auto& [a, b] : edges) (void)builder.add_edge(a, b);
  return std::move(builder).build();
}

// rows x cols grid, unit r * cols + c.
inline EdgeList grid_edges(std::uint32_t rows, std::uint32_t cols) {
  EdgeList e;
  for (std::uint32_t r = 0; r < rows; ++r) {
    for (std::uint32_t c = 0; c < cols; ++c) {
      const std::uint32_t u = r * cols + c;
      if (c + 1 < cols) e.emplace_back(u, u + 1);
      if (r + 1 < rows) e.emplace_back(u, u + cols);
    }
  }
  return e;
}

inline EdgeList complete_edges(std::uint32_t n) {
  EdgeList e;
  for (std::uint32_t a = 0; a < n; ++a)
    for (std::uint32_t b = a + 1; b < n; ++b) e.emplace_back(a, b);
  return e;
}

inline EdgeList cycle_edges(std::uint32_t n) {
  EdgeList e;
  for (std::uint32_t a = 0; a < n; ++a) e.emplace_back(a, (a + 1) % n);
  return e;
}

// Parts {0..m-1} and {m..m+n-1}.
inline EdgeList complete_bipartite_edges(std::uint32_t m, std::uint32_t n) {
  EdgeList e;
  for (std::uint32_t a = 0; a < m; ++a)
    for (std::uint32_t b = 0; b < n; ++b) e.emplace_back(a, m + b);
  return e;
}

// Outer 5-cycle 0..4, spokes i -- i+5, inner pentagram on 5..9.
inline EdgeList petersen_edges() {
  EdgeList e;
  for (std::uint32_t i = 0; i < 5; ++i) {
    e.emplace_back(i, (i + 1) % 5);
    e.emplace_back(i, i + 5);
    e.emplace_back(5 + i, 5 + (i + 2) % 5);
  }
  return e;
}

// Hypercube Q_d: vertices differing in one bit.
inline EdgeList hypercube_edges(std::uint32_t d) {
  EdgeList e;
  for (std::uint32_t u = 0; u < (1U << d); ++u)
    for (std::uint32_t bit = 0; bit < d; ++bit)
      if (!(u & (1U << bit))) e.emplace_back(u, u | (1U << bit));
  return e;
}

// Irregular: triangle 0-1-2, a 4-cycle 2-3-4-5 with chord 2-4, and a pendant 6 on 4.
// τ = 3 (triangle) × 8 (4-cycle with a chord) × 1 = 24, blocks multiply.
inline EdgeList triangle_square_pendant_edges() {
  return {{0, 1}, {1, 2}, {0, 2}, {2, 3}, {3, 4}, {4, 5}, {5, 2}, {2, 4}, {4, 6}};
}

}  // namespace planmill::test
