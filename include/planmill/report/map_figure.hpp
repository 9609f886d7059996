#pragma once
// A plan drawn on the units' shapes: units filled by district (holes left open), thin light seams
// between units, and each district's outline drawn over them: the unit edges whose two sides lie
// in different districts, and the map's outer edge.
#include <cstddef>
#include <cstdint>
#include <span>
#include <string_view>
#include <utility>
#include <vector>

#include "planmill/graph/adjacency.hpp"
#include "planmill/report/figures.hpp"

namespace planmill::report {

using Ring = std::vector<std::pair<double, double>>;
using Shape = std::vector<Ring>;  // one polygon: its outer ring, then its holes

// shapes[u] are unit u's polygons (x, y); district[u] its district (0-based); units without a
// shape are skipped (the caption counts them). Shared edges are matched by their end points; an
// edge that only one unit traces is compared with the collinear edges of the unit's neighbours
// (`neighbours`, the map's adjacency), so a boundary traced with extra vertices on one side (a
// large unit beside small ones) is matched too. A boundary traced along different lines on its
// two sides is drawn as an outline.
[[nodiscard]] Figure map_figure(std::string_view name, std::string_view title,
                                std::span<const std::vector<Shape>> shapes, std::span<const std::uint16_t> district,
                                std::size_t districts, AdjacencyView neighbours = {});

}  // namespace planmill::report
