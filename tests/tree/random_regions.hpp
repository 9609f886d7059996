#pragma once
// Random planar-ish regions for tree-count tests: a rows x cols grid whose cells each get a
// diagonal with probability diagonal_probability (one of the two at random, so the graph stays
// planar, degrees up to 8 like a precinct map), and units removed as holes with probability
// hole_probability. connected_region() returns the units of the hole-free component around a
// random unit, in random order.
#include <cstdint>
#include <utility>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/graph/unit_graph.hpp"
#include "small_graphs.hpp"

namespace planmill::test {

inline UnitGraph planar_grid(std::uint32_t rows, std::uint32_t cols, double diagonal_probability,
                             Rng& rng) {
  EdgeList edges = grid_edges(rows, cols);
  for (std::uint32_t r = 0; r + 1 < rows; ++r)
    for (std::uint32_t c = 0; c + 1 < cols; ++c) {
      if (uniform01(rng) >= diagonal_probability) continue;
      const std::uint32_t u = r * cols + c;
      if (uniform_below(rng, 2) == 0) {
        edges.emplace_back(u, u + cols + 1);
      } else {
        edges.emplace_back(u + 1, u + cols);
      }
    }
  return graph_from_edges(rows * cols, edges);
}

// Units of the component (after removing holes) that contains a random kept unit, shuffled.
inline std::vector<UnitIndex> connected_region(const UnitGraph& graph, double hole_probability,
                                               Rng& rng) {
  const auto n = static_cast<std::uint32_t>(graph.unit_count());
  std::vector<std::uint8_t> kept(n);
  for (auto& k : kept) k = uniform01(rng) >= hole_probability ? 1 : 0;
  UnitIndex start = uniform_below(rng, n);
  kept[start] = 1;
  std::vector<UnitIndex> units = {start};
  kept[start] = 2;  // 2 = reached
  for (std::size_t head = 0; head < units.size(); ++head)
    for (const UnitIndex w : graph.neighbors(units[head]))
      if (kept[w] == 1) {
        kept[w] = 2;
        units.push_back(w);
      }
  for (std::size_t i = units.size(); i > 1; --i)
    std::swap(units[i - 1], units[uniform_below(rng, static_cast<std::uint32_t>(i))]);
  return units;
}

}  // namespace planmill::test
