#pragma once
// TreeWeights: the weight a spanning tree gives each edge of the map, so that trees favour edges
// inside a county (and inside a municipality) and their cuts fall on county lines. An edge weighs
// county (if both ends lie in one county) times municipality (if both ends lie in one
// municipality), else 1. Wilson's algorithm on these weights draws a tree T with probability
// proportional to the product of its edge weights (Wilson 1996); the weighted tree count is the
// determinant of the reduced weighted Laplacian (Kirchhoff's matrix-tree theorem, weighted form).
// Both factors 1: every edge weighs 1 and everything is as without weights.
#include "planmill/base/ids.hpp"
#include "planmill/graph/unit_graph.hpp"

namespace planmill {

struct TreeWeights {
  double county = 1.0;
  double municipality = 1.0;

  [[nodiscard]] bool trivial() const noexcept { return county == 1.0 && municipality == 1.0; }
  // Units in no municipality (UnitCodes::kNone) share none.
  [[nodiscard]] double weight(const UnitGraph& graph, UnitIndex u, UnitIndex w) const noexcept {
    double x = 1.0;
    if (county != 1.0 && graph.has_counties() && graph.counties().code[u] == graph.counties().code[w]) x *= county;
    if (municipality != 1.0 && graph.has_municipalities()) {
      const std::uint32_t a = graph.municipalities().code[u], b = graph.municipalities().code[w];
      if (a != UnitCodes::kNone && a == b) x *= municipality;
    }
    return x;
  }
};

}  // namespace planmill
