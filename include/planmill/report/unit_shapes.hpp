#pragma once
// The units' shapes for the report's maps: a GeoJSON FeatureCollection (the job's map.geometry)
// whose features carry the map's id column as a property; Polygon and MultiPolygon geometries
// with their holes.
#include <cstddef>
#include <string>
#include <vector>

#include "planmill/graph/unit_graph.hpp"
#include "planmill/report/map_figure.hpp"

namespace planmill::report {

struct UnitShapes {
  std::vector<std::vector<Shape>> shapes;  // per unit of the graph, in graph order; empty = no shape
  std::size_t without_shape = 0;         // units of the graph no feature names
  std::size_t unknown_features = 0;      // features whose id is no unit of the graph
};

// Throws InputError naming the file (and the feature) when it cannot be read, is not GeoJSON, or a
// feature lacks the id property or has coordinates that are not numbers.
[[nodiscard]] UnitShapes read_unit_shapes(const std::string& path, const UnitGraph& graph,
                                          const std::string& id_property);

}  // namespace planmill::report
