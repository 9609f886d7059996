#pragma once
// District shapes from unit shapes (docs/export.md, "Plans back to GIS"): the polygons of a GIS
// layer that GDAL/OGR reads, matched to the map's units by an id attribute; dissolved into one
// shape per district of a plan (GEOS union through OGR); written as a GeoPackage or GeoJSON layer
// with one feature per district and the attributes the caller gives. GDAL stays inside this part.
#include <array>
#include <cstddef>
#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <variant>
#include <vector>

#include "planmill/base/ids.hpp"

namespace planmill::geo {

using Point = std::array<double, 2>;            // x, y in the layer's coordinates
using Ring = std::vector<Point>;                // closed: the last point repeats the first
using Polygon = std::vector<Ring>;              // the outer ring, then its holes
using Outline = std::vector<Polygon>;           // one polygon per separate piece

class DistrictShapes;

// The shape of every unit of the map. `unit_ids[u]` is unit u's id; the feature whose `id_field`
// holds it is its shape. InputError naming `path` (and `key`, the option or job key that named the
// file) when GDAL cannot open it, the layer lacks the field, an id repeats, a unit's geometry is
// empty or no polygon, or a unit of the map has no feature (the first named, all counted).
// Invalid polygons are repaired with make-valid. Features that are no unit of the map are counted.
class UnitShapes {
 public:
  UnitShapes(const std::string& path, const std::string& id_field,
             std::span<const std::string> unit_ids, const std::string& key);
  ~UnitShapes();
  UnitShapes(UnitShapes&&) noexcept;
  UnitShapes& operator=(UnitShapes&&) noexcept;

  [[nodiscard]] std::size_t unit_count() const noexcept;
  [[nodiscard]] std::size_t extra_features() const noexcept;  // features of no unit, left out
  // Empty, or why the layer's CRS is not carried to the output (coordinates outside lon/lat).
  [[nodiscard]] const std::string& crs_note() const noexcept;

 private:
  friend class DistrictShapes;
  friend class DistrictLayerWriter;
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

// One dissolved shape per district: the union of its units' shapes. district_of_unit[u] is 0..k-1.
// std::invalid_argument on a size mismatch or a label >= k.
class DistrictShapes {
 public:
  DistrictShapes(const UnitShapes& units, std::span<const DistrictIndex> district_of_unit, std::size_t k);
  ~DistrictShapes();
  DistrictShapes(DistrictShapes&&) noexcept;
  DistrictShapes& operator=(DistrictShapes&&) noexcept;

  [[nodiscard]] std::size_t district_count() const noexcept;
  [[nodiscard]] std::size_t pieces(DistrictIndex d) const;   // separate polygons of district d
  [[nodiscard]] double planar_area(DistrictIndex d) const;   // in squared coordinate units
  [[nodiscard]] Outline outline(DistrictIndex d) const;      // for drawing

 private:
  friend class DistrictLayerWriter;
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

enum class LayerFormat { geopackage, geojson };

// `format` "gpkg" or "geojson"; empty: from the extension of `path` (.gpkg; .geojson or .json).
// InputError (key `option`) when neither tells.
[[nodiscard]] LayerFormat layer_format(const std::string& path, const std::string& format,
                                       const std::string& option);

struct Field {
  enum class Type { integer, real, text };
  std::string name;
  Type type = Type::real;
};
using FieldValue = std::variant<std::monostate, std::int64_t, double, std::string>;  // monostate: null

// A layer "districts" of one feature per added district, in the CRS of the unit shapes' layer.
// GeoPackage declares MULTIPOLYGON and every feature is one; GeoJSON writes a Polygon for a district
// of one piece and a MultiPolygon otherwise. The file at `path` is created (an existing one is
// replaced) and complete only after close(), which flushes it to disk; a writer dropped before
// close() succeeded removes it. OutputError naming `path` when GDAL cannot write.
class DistrictLayerWriter {
 public:
  DistrictLayerWriter(const std::string& path, LayerFormat format, const UnitShapes& crs_of,
                      std::vector<Field> fields);
  ~DistrictLayerWriter();
  DistrictLayerWriter(const DistrictLayerWriter&) = delete;
  DistrictLayerWriter& operator=(const DistrictLayerWriter&) = delete;

  // values[i] is fields[i]'s value (std::invalid_argument on a wrong count).
  void add(const DistrictShapes& shapes, DistrictIndex d, std::span<const FieldValue> values);
  void close();

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace planmill::geo
