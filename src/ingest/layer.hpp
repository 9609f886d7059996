#pragma once
// The pieces of ingest (docs/ingest.md): read_layer.cpp reads and checks the features,
// measure.cpp measures lengths and areas (geodesic or planar), adjacency.cpp finds the neighbours
// through a grid index, unit_order.cpp numbers the units along a Hilbert curve, ingest.cpp joins the parts of the map and writes the files.
#include <ogrsf_frmts.h>

#include <GeographicLib/Geodesic.hpp>
#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "planmill/ingest/ingest.hpp"

namespace planmill::ingest {

// Lengths and areas in the layer's terms: on the ellipsoid (metres) when its CRS is geographic,
// otherwise in the coordinates' own unit.
class Metric {
 public:
  static Metric planar(std::string unit);
  static Metric geodesic(double semi_major, double flattening, bool lon_is_x, std::string datum);
  [[nodiscard]] bool is_geodesic() const { return geod_.has_value(); }
  [[nodiscard]] const std::string& description() const { return description_; }
  // Sum of the lengths of every line (and ring) in g; points count 0.
  [[nodiscard]] double length(const OGRGeometry& g) const;
  // Area (outer rings less holes) and perimeter (every ring) of a polygon or multipolygon.
  void measure(const OGRGeometry& shape, double& area, double& perimeter) const;

 private:
  [[nodiscard]] double line_length(const OGRSimpleCurve& line) const;
  [[nodiscard]] double ring_area(const OGRSimpleCurve& ring) const;
  std::optional<GeographicLib::Geodesic> geod_;
  bool lon_is_x_ = true;
  std::string description_;
};

struct Box {
  double min_x, min_y, max_x, max_y;
};

struct LayerUnit {
  std::string id;
  std::size_t feature = 0;           // 1-based feature number, for messages
  std::vector<std::string> values;   // the kept columns, as text
  OGRGeometryUniquePtr shape;        // polygon or multipolygon, valid
  OGRGeometryUniquePtr boundary;     // its rings as lines
  Box box{};
  double area = 0, perimeter = 0;
};

struct Layer {
  std::string source;                // path as given
  std::vector<std::string> columns;  // names of the kept columns
  std::vector<LayerUnit> units;
  Metric metric = Metric::planar("");
  std::vector<std::string> notes;
};

[[nodiscard]] Layer read_layer(const IngestOptions& options);

// The order units are written in: order[i] is the layer index of the i-th unit. The layer's
// feature order when `source_order`, else along a Hilbert curve of the units' centroids
// (unit_order.cpp; ties keep feature order).
[[nodiscard]] std::vector<std::size_t> unit_order(const Layer& layer, bool source_order);

struct Edge {
  std::size_t a, b;                  // a < b
  double length;
};

// Rook pairs (a shared boundary of positive length), or queen pairs too; with a snap tolerance,
// pairs whose boundaries run within it of each other (noted in `notes`). Sorted by (a, b).
[[nodiscard]] std::vector<Edge> find_adjacency(const Layer& layer, const IngestOptions& options,
                                               std::vector<std::string>& notes);

}  // namespace planmill::ingest
