#include "planmill/report/unit_shapes.hpp"

#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>

#include "planmill/base/error.hpp"

namespace planmill::report {
namespace {

using nlohmann::json;

Ring read_ring(const json& ring, const std::string& path, const std::string& where) {
  Ring r;
  if (!ring.is_array()) throw InputError({path, 0, where}, "a ring is not an array of positions", "fix the GeoJSON");
  r.reserve(ring.size());
  for (const json& p : ring) {
    if (!p.is_array() || p.size() < 2 || !p[0].is_number() || !p[1].is_number())
      throw InputError({path, 0, where}, "a position is not [x, y] numbers", "fix the GeoJSON");
    r.emplace_back(p[0].get<double>(), p[1].get<double>());
  }
  return r;
}

Shape read_polygon(const json& polygon, const std::string& path, const std::string& where) {
  Shape shape;
  for (const json& ring : polygon) shape.push_back(read_ring(ring, path, where));
  return shape;
}

}  // namespace

UnitShapes read_unit_shapes(const std::string& path, const UnitGraph& graph, const std::string& id_property) {
  std::ifstream in(path, std::ios::binary);
  if (!in)
    throw InputError({path, 0, "map.geometry"}, "cannot be read",
                     "give a GeoJSON of the units' shapes, or leave map.geometry out");
  std::ostringstream text;
  text << in.rdbuf();
  const json doc = json::parse(text.str(), nullptr, false);
  if (doc.is_discarded() || !doc.is_object() || !doc.contains("features") || !doc["features"].is_array())
    throw InputError({path, 0, "map.geometry"}, "is not a GeoJSON FeatureCollection",
                     "give a GeoJSON whose features carry the map's id column as a property");
  UnitShapes shapes;
  shapes.shapes.resize(graph.unit_count());
  std::size_t index = 0;
  for (const json& feature : doc["features"]) {
    const std::string where = "features[" + std::to_string(index++) + "]";
    const json* id = nullptr;
    if (feature.is_object() && feature.contains("properties") && feature["properties"].is_object() &&
        feature["properties"].contains(id_property))
      id = &feature["properties"][id_property];
    if (id == nullptr || !(id->is_string() || id->is_number_integer()))
      throw InputError({path, 0, where}, "has no property '" + id_property + "' (the map's id column)",
                       "give every feature the unit id under the map's id column");
    const std::string unit = id->is_string() ? id->get<std::string>() : std::to_string(id->get<long long>());
    const auto u = graph.find_unit(unit);
    if (!u) {
      ++shapes.unknown_features;
      continue;
    }
    const json& geometry = feature.value("geometry", json());
    if (!geometry.is_object()) continue;  // a null geometry: the unit has no shape
    const std::string type = geometry.value("type", "");
    const json& coordinates = geometry.value("coordinates", json());
    if (type == "Polygon" && coordinates.is_array() && !coordinates.empty()) {
      shapes.shapes[*u].push_back(read_polygon(coordinates, path, where));
    } else if (type == "MultiPolygon" && coordinates.is_array()) {
      for (const json& polygon : coordinates)
        if (polygon.is_array() && !polygon.empty()) shapes.shapes[*u].push_back(read_polygon(polygon, path, where));
    } else {
      throw InputError({path, 0, where}, "geometry '" + type + "' is not a Polygon or MultiPolygon",
                       "give the units' shapes as polygons");
    }
  }
  for (const auto& r : shapes.shapes) shapes.without_shape += r.empty() ? 1 : 0;
  return shapes;
}

}  // namespace planmill::report
