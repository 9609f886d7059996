// Reading the unit shapes: every unit of the map must have exactly one polygon feature.
#include <cpl_error.h>

#include <cmath>
#include <unordered_map>

#include "geo/shapes.hpp"
#include "planmill/base/error.hpp"

namespace planmill::geo {
namespace {

std::string quoted(const std::string& s) { return "'" + s + "'"; }

// Coordinates a geographic CRS can hold (longitude up to 360 for layers drawn east of 180).
bool inside_lon_lat(const OGREnvelope& e) {
  return e.MinX >= -180 && e.MaxX <= 360 && std::abs(e.MinY) <= 90 && std::abs(e.MaxY) <= 90;
}

}  // namespace

std::unique_ptr<OGRMultiPolygon> polygons_only(const OGRGeometry& g) {
  auto multi = std::make_unique<OGRMultiPolygon>();
  const OGRwkbGeometryType type = wkbFlatten(g.getGeometryType());
  if (type == wkbPolygon) {
    multi->addGeometry(&g);
  } else if (OGR_GT_IsSubClassOf(type, wkbGeometryCollection)) {
    for (const OGRGeometry* part : *g.toGeometryCollection()) {
      const std::unique_ptr<OGRMultiPolygon> pieces = polygons_only(*part);
      for (const OGRPolygon* p : *pieces) multi->addGeometry(p);
    }
  }
  return multi;
}

UnitShapes::UnitShapes(const std::string& path, const std::string& id_field,
                       std::span<const std::string> unit_ids, const std::string& key)
    : impl_(std::make_unique<Impl>()) {
  GDALAllRegister();
  CPLPushErrorHandler(CPLQuietErrorHandler);  // GDAL's messages become ours, on one line
  struct PopHandler { ~PopHandler() { CPLPopErrorHandler(); } } pop;
  CPLErrorReset();
  GDALDatasetUniquePtr ds(GDALDataset::Open(path.c_str(), GDAL_OF_VECTOR | GDAL_OF_READONLY));
  if (!ds) {
    const std::string reason = *CPLGetLastErrorMsg() ? std::string(" (") + CPLGetLastErrorMsg() + ")" : "";
    throw InputError({path, 0, key}, "GDAL cannot open the units' shapes as a vector map" + reason,
                     "give a GeoPackage, Shapefile, GeoJSON or other vector file of the units' polygons");
  }
  if (ds->GetLayerCount() == 0) {
    throw InputError({path, 0, key}, "the file holds no vector layer", "give a file with the units' polygons");
  }
  OGRLayer& layer = *ds->GetLayer(0);
  OGRFeatureDefn& defn = *layer.GetLayerDefn();
  const int id_index = defn.GetFieldIndex(id_field.c_str());
  if (id_index < 0) {
    std::string names;
    for (int i = 0; i < defn.GetFieldCount(); ++i) names += (i ? ", " : "") + quoted(defn.GetFieldDefn(i)->GetNameRef());
    throw InputError({path, 0, key}, "no attribute " + quoted(id_field) + " in the layer (attributes: " + names + ")",
                     "give the layer whose features carry the map's unit ids, or name the attribute with --geometry-id");
  }
  std::unordered_map<std::string, std::size_t> unit_of;
  for (std::size_t u = 0; u < unit_ids.size(); ++u) unit_of.emplace(unit_ids[u], u);
  impl_->shapes.resize(unit_ids.size());
  std::vector<std::size_t> feature_of(unit_ids.size(), 0);
  OGREnvelope all;
  std::size_t number = 0;
  for (const OGRFeatureUniquePtr& feature : layer) {
    ++number;
    const std::string id = feature->IsFieldSetAndNotNull(id_index) ? feature->GetFieldAsString(id_index) : "";
    const auto it = unit_of.find(id);
    if (it == unit_of.end()) {
      ++impl_->extra;
      continue;
    }
    const std::size_t u = it->second;
    const std::string unit = "unit " + quoted(id) + " (feature " + std::to_string(number) + ")";
    if (feature_of[u] != 0) {
      throw InputError({path, 0, key}, "unit " + quoted(id) + " has two features (" + std::to_string(feature_of[u]) + " and " +
                       std::to_string(number) + ")", "keep one shape per unit id");
    }
    feature_of[u] = number;
    const OGRGeometry* g = feature->GetGeometryRef();
    if (!g || g->IsEmpty()) {
      throw InputError({path, 0, key}, unit + " has an empty geometry", "draw its polygon in the units' shapes");
    }
    OGRGeometryUniquePtr shape(g->hasCurveGeometry() ? g->getLinearGeometry() : g->clone());
    const OGRwkbGeometryType type = wkbFlatten(shape->getGeometryType());
    if (type != wkbPolygon && type != wkbMultiPolygon) {
      throw InputError({path, 0, key}, unit + " is a " + OGRGeometryTypeToName(type) + ", not a polygon",
                       "give the layer of the units' polygons");
    }
    shape->flattenTo2D();
    if (!shape->IsValid()) {
      OGRGeometryUniquePtr fixed(shape->MakeValid());
      std::unique_ptr<OGRMultiPolygon> polygons = fixed ? polygons_only(*fixed) : nullptr;
      if (!polygons || polygons->IsEmpty()) {
        throw InputError({path, 0, key}, unit + " is an invalid polygon that make-valid cannot repair into an area",
                         "fix its rings in a GIS (no self-crossing, closed rings)");
      }
      shape.reset(polygons.release());
    }
    OGREnvelope e;
    shape->getEnvelope(&e);
    all.Merge(e);
    impl_->shapes[u] = std::move(shape);
  }
  std::size_t missing = 0;
  std::string first;
  for (std::size_t u = 0; u < unit_ids.size(); ++u) {
    if (impl_->shapes[u]) continue;
    if (missing++ == 0) first = unit_ids[u];
  }
  if (missing > 0) {
    throw InputError({path, 0, key}, std::to_string(missing) + " unit(s) of the map have no shape in the layer (first: " +
                     quoted(first) + ")", "give the shapes of the map's units, with the map's ids in the id attribute");
  }
  if (const OGRSpatialReference* srs = layer.GetSpatialRef()) {
    if (srs->IsGeographic() && !inside_lon_lat(all)) {
      impl_->crs_note = "the units' shapes lie outside longitude/latitude though their layer's CRS is geographic "
                        "(GeoJSON without a crs member is WGS 84 by RFC 7946), so the district layer is written without a CRS";
    } else {
      impl_->srs.reset(srs->Clone());
    }
  }
}

UnitShapes::~UnitShapes() = default;
UnitShapes::UnitShapes(UnitShapes&&) noexcept = default;
UnitShapes& UnitShapes::operator=(UnitShapes&&) noexcept = default;
std::size_t UnitShapes::unit_count() const noexcept { return impl_->shapes.size(); }
std::size_t UnitShapes::extra_features() const noexcept { return impl_->extra; }
const std::string& UnitShapes::crs_note() const noexcept { return impl_->crs_note; }

}  // namespace planmill::geo
