// Reading the layer: the CRS decides how to measure; every feature is checked (id, geometry,
// validity) before anything is computed from it.
#include <cpl_error.h>

#include <algorithm>
#include <charconv>
#include <cmath>
#include <unordered_map>

#include "ingest/layer.hpp"
#include "planmill/base/error.hpp"

namespace planmill::ingest {
namespace {

std::string quoted(const std::string& s) { return "'" + s + "'"; }

OGRLayer* pick_layer(GDALDataset& ds, const IngestOptions& o) {
  if (ds.GetLayerCount() == 0) {
    throw InputError({o.map_path, 0, ""}, "the file holds no vector layer", "give a file with a polygon layer");
  }
  if (o.layer.empty()) return ds.GetLayer(0);
  if (OGRLayer* layer = ds.GetLayerByName(o.layer.c_str())) return layer;
  std::string names;
  for (int i = 0; i < ds.GetLayerCount(); ++i) names += (i ? ", " : "") + quoted(ds.GetLayer(i)->GetName());
  throw InputError({o.map_path, 0, "--layer"}, "no layer " + quoted(o.layer) + " (layers: " + names + ")",
                   "name one of the layers");
}

int field_index(OGRFeatureDefn& defn, const std::string& name, const IngestOptions& o, const char* option) {
  const int index = defn.GetFieldIndex(name.c_str());
  if (index >= 0) return index;
  std::string names;
  for (int i = 0; i < defn.GetFieldCount(); ++i) names += (i ? ", " : "") + quoted(defn.GetFieldDefn(i)->GetNameRef());
  throw InputError({o.map_path, 0, option}, "no attribute " + quoted(name) + " in the layer (attributes: " + names + ")",
                   "name one of the layer's attributes");
}

Metric choose_metric(const OGRSpatialReference* srs, const IngestOptions& o) {
  if (o.planar || (srs && !srs->IsGeographic())) {
    const char* unit = nullptr;
    if (srs && srs->IsProjected()) srs->GetLinearUnits(&unit);
    return Metric::planar(unit && *unit ? unit : "map units");
  }
  if (!srs) {
    throw InputError({o.map_path, 0, ""}, "the layer has no coordinate reference system, so ingest cannot tell degrees from planar units",
                     "pass --planar to measure the coordinates as planar, or give the file a CRS");
  }
  // x is the longitude unless the data keep the authority's latitude-first order.
  const std::vector<int> mapping = srs->GetDataAxisToSRSAxisMapping();
  const bool lon_is_x = !(srs->EPSGTreatsAsLatLong() && mapping.size() >= 2 && mapping[0] == 1);
  const double inverse_flattening = srs->GetInvFlattening();
  const char* datum = srs->GetAttrValue("DATUM");
  return Metric::geodesic(srs->GetSemiMajor(), inverse_flattening == 0 ? 0 : 1 / inverse_flattening, lon_is_x,
                          datum ? datum : "its datum");
}

// A repaired shape keeps only its polygons (make-valid may add lines where a ring folded on itself).
OGRGeometryUniquePtr polygons_of(OGRGeometryUniquePtr g) {
  const OGRwkbGeometryType type = wkbFlatten(g->getGeometryType());
  if (type == wkbPolygon || type == wkbMultiPolygon) return g;
  auto multi = std::make_unique<OGRMultiPolygon>();
  if (OGR_GT_IsSubClassOf(type, wkbGeometryCollection)) {
    for (const OGRGeometry* part : *g->toGeometryCollection()) {
      const OGRwkbGeometryType t = wkbFlatten(part->getGeometryType());
      if (t == wkbPolygon) multi->addGeometry(part);
      if (t == wkbMultiPolygon) {
        for (const OGRPolygon* p : *part->toMultiPolygon()) multi->addGeometry(p);
      }
    }
  }
  return OGRGeometryUniquePtr(multi.release());
}

// Reals in the shortest form that reads back the same double (GDAL's own text keeps 15 digits).
std::string field_text(const OGRFeature& feature, int index) {
  if (!feature.IsFieldSetAndNotNull(index)) return "";
  if (feature.GetFieldDefnRef(index)->GetType() != OFTReal) return feature.GetFieldAsString(index);
  char buffer[64];
  const auto result = std::to_chars(buffer, buffer + sizeof buffer, feature.GetFieldAsDouble(index));
  return std::string(buffer, result.ptr);
}

}  // namespace

Layer read_layer(const IngestOptions& o) {
  GDALAllRegister();
  CPLPushErrorHandler(CPLQuietErrorHandler);  // GDAL's messages become ours, on one line
  struct PopHandler { ~PopHandler() { CPLPopErrorHandler(); } } pop;
  CPLErrorReset();
  GDALDatasetUniquePtr ds(GDALDataset::Open(o.map_path.c_str(), GDAL_OF_VECTOR | GDAL_OF_READONLY));
  if (!ds) {
    const std::string reason = *CPLGetLastErrorMsg() ? std::string(" (") + CPLGetLastErrorMsg() + ")" : "";
    throw InputError({o.map_path, 0, ""}, "GDAL cannot open it as a vector map" + reason,
                     "give a GeoPackage, Shapefile, GeoJSON or other vector file that GDAL reads");
  }
  if (!OGRGeometryFactory::haveGEOS()) {
    throw InputError({o.map_path, 0, ""}, "this GDAL is built without GEOS, which ingest needs", "install a GDAL built with GEOS (Debian's is)");
  }
  OGRLayer* layer = pick_layer(*ds, o);
  OGRFeatureDefn& defn = *layer->GetLayerDefn();
  Layer out;
  out.source = o.map_path;
  out.metric = choose_metric(layer->GetSpatialRef(), o);
  const int id_index = field_index(defn, o.id_field, o, "--id");
  std::vector<int> kept;
  const auto keep = [&](const std::string& name, const char* option) {
    if (name.empty() || name == o.id_field || std::count(out.columns.begin(), out.columns.end(), name)) return;
    for (const char* ours : {"area", "perimeter", "outer", "feature"}) {
      if (name == ours) {
        throw InputError({o.map_path, 0, option}, "the attribute " + quoted(name) + " has the name of a column ingest computes",
                         "rename the attribute in the map, or leave it out");
      }
    }
    kept.push_back(field_index(defn, name, o, option));
    out.columns.push_back(name);
  };
  keep(o.population, "--population");
  keep(o.county, "--county");
  keep(o.municipality, "--municipality");
  for (const std::string& name : o.keep) keep(name, "--keep");

  std::unordered_map<std::string, std::size_t> feature_of;
  std::size_t number = 0, multipart = 0;
  std::string first_multipart;
  for (const OGRFeatureUniquePtr& feature : *layer) {
    ++number;
    LayerUnit u;
    u.feature = number;
    const std::string where = "feature " + std::to_string(number);
    if (!feature->IsFieldSetAndNotNull(id_index) || !*feature->GetFieldAsString(id_index)) {
      throw InputError({o.map_path, 0, o.id_field}, where + " has an empty id", "give every feature an id, or choose another --id attribute");
    }
    u.id = feature->GetFieldAsString(id_index);
    const std::string unit = "unit " + quoted(u.id) + " (" + where + ")";
    if (auto [it, fresh] = feature_of.emplace(u.id, number); !fresh) {
      throw InputError({o.map_path, 0, o.id_field}, "unit " + quoted(u.id) + " appears twice (features " + std::to_string(it->second) + " and " +
                       std::to_string(number) + ")", "make the ids unique, or choose another --id attribute");
    }
    for (int index : kept) u.values.push_back(field_text(*feature, index));
    const OGRGeometry* g = feature->GetGeometryRef();
    if (!g || g->IsEmpty()) {
      throw InputError({o.map_path, 0, ""}, unit + " has an empty geometry", "draw its polygon, or remove the feature");
    }
    OGRGeometryUniquePtr shape(g->hasCurveGeometry() ? g->getLinearGeometry() : g->clone());
    const OGRwkbGeometryType type = wkbFlatten(shape->getGeometryType());
    if (type != wkbPolygon && type != wkbMultiPolygon) {
      throw InputError({o.map_path, 0, ""}, unit + " is a " + OGRGeometryTypeToName(type) + ", not a polygon",
                       "ingest reads polygon layers; pick the polygon layer with --layer");
    }
    shape->flattenTo2D();
    if (!shape->IsValid()) {
      double before = 0, ignored = 0;
      out.metric.measure(*shape, before, ignored);
      OGRGeometryUniquePtr fixed(shape->MakeValid());
      if (fixed) fixed = polygons_of(std::move(fixed));
      if (!fixed || fixed->IsEmpty()) {
        throw InputError({o.map_path, 0, ""}, unit + " is an invalid polygon that make-valid cannot repair into an area",
                         "fix its rings in a GIS (no self-crossing, closed rings)");
      }
      shape = std::move(fixed);
      double after = 0;
      out.metric.measure(*shape, after, ignored);
      out.notes.push_back(unit + ": invalid polygon (self-crossing or folded ring) repaired by make-valid; area " +
                          std::to_string(before) + " as drawn, " + std::to_string(after) + " repaired");
    }
    if (wkbFlatten(shape->getGeometryType()) == wkbMultiPolygon && shape->toMultiPolygon()->getNumGeometries() > 1) {
      if (multipart++ == 0) first_multipart = u.id;
    }
    OGREnvelope env;
    shape->getEnvelope(&env);
    u.box = {env.MinX, env.MinY, env.MaxX, env.MaxY};
    if (out.metric.is_geodesic()) {
      const bool inside = env.MinX >= -180 && env.MaxX <= 360 && std::abs(env.MinY) <= 90 && std::abs(env.MaxY) <= 90;
      if (!inside) {
        throw InputError({o.map_path, 0, ""}, unit + " has coordinates outside longitude/latitude, though the layer's CRS is geographic "
                         "(GeoJSON without a crs member is WGS 84 by RFC 7946)", "pass --planar if the coordinates are planar");
      }
    }
    u.boundary.reset(shape->Boundary());
    out.metric.measure(*shape, u.area, u.perimeter);
    u.shape = std::move(shape);
    out.units.push_back(std::move(u));
  }
  if (out.units.empty()) {
    throw InputError({o.map_path, 0, ""}, "the layer has no features", "give a layer with the units' polygons");
  }
  if (multipart) {
    out.notes.push_back(std::to_string(multipart) + " unit(s) are made of several separate pieces (first: " + quoted(first_multipart) +
                        "); each is one unit, its pieces' areas and perimeters added");
  }
  return out;
}

}  // namespace planmill::ingest
