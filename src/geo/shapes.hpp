#pragma once
// The pieces of geo (planmill/geo/districts.hpp): unit_shapes.cpp reads and matches the unit
// shapes, dissolve.cpp unites them per district, district_layer.cpp writes the layer; the OGR
// objects they pass between them live here.
#include <ogrsf_frmts.h>

#include <memory>
#include <string>
#include <vector>

#include "planmill/geo/districts.hpp"

namespace planmill::geo {

struct UnitShapes::Impl {
  std::vector<OGRGeometryUniquePtr> shapes;  // per unit: a valid polygon or multipolygon
  std::unique_ptr<OGRSpatialReference> srs;  // null when the layer has none (or it is dropped)
  std::size_t extra = 0;
  std::string crs_note;
};

struct DistrictShapes::Impl {
  std::vector<std::unique_ptr<OGRMultiPolygon>> districts;
};

// Only the polygons of a geometry, as one multipolygon (make-valid and unions may add lines or
// points where rings touch themselves).
[[nodiscard]] std::unique_ptr<OGRMultiPolygon> polygons_only(const OGRGeometry& g);

}  // namespace planmill::geo
