// Writing the district layer with OGR's GeoPackage or GeoJSON driver.
#include <cpl_error.h>
#include <fcntl.h>
#include <unistd.h>

#include <algorithm>
#include <filesystem>
#include <stdexcept>

#include "geo/shapes.hpp"
#include "planmill/base/error.hpp"

namespace planmill::geo {
namespace {

std::string extension_of(const std::string& path) {
  std::string ext = std::filesystem::path(path).extension().string();
  std::transform(ext.begin(), ext.end(), ext.begin(), [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return ext;
}

std::string gdal_reason() {
  return *CPLGetLastErrorMsg() ? std::string(" (GDAL: ") + CPLGetLastErrorMsg() + ")" : "";
}

}  // namespace

LayerFormat layer_format(const std::string& path, const std::string& format, const std::string& option) {
  if (format == "gpkg") return LayerFormat::geopackage;
  if (format == "geojson") return LayerFormat::geojson;
  if (!format.empty()) {
    throw InputError({"", 0, option + "-format"}, "unknown format '" + format + "'", "give gpkg or geojson");
  }
  const std::string ext = extension_of(path);
  if (ext == ".gpkg") return LayerFormat::geopackage;
  if (ext == ".geojson" || ext == ".json") return LayerFormat::geojson;
  throw InputError({path, 0, option}, "cannot tell the GIS format from the file name",
                   "end it in .gpkg (GeoPackage) or .geojson, or name the format with " + option + "-format gpkg|geojson");
}

struct DistrictLayerWriter::Impl {
  std::string path;
  LayerFormat format;
  std::vector<Field> fields;
  GDALDatasetUniquePtr ds;
  OGRLayer* layer = nullptr;
  bool closed = false;
};

DistrictLayerWriter::DistrictLayerWriter(const std::string& path, LayerFormat format, const UnitShapes& crs_of,
                                         std::vector<Field> fields)
    : impl_(std::make_unique<Impl>()) {
  Impl& w = *impl_;
  w.path = path;
  w.format = format;
  w.fields = std::move(fields);
  GDALAllRegister();
  CPLPushErrorHandler(CPLQuietErrorHandler);
  struct PopHandler { ~PopHandler() { CPLPopErrorHandler(); } } pop;
  CPLErrorReset();
  const bool gpkg = format == LayerFormat::geopackage;
  GDALDriver* driver = GetGDALDriverManager()->GetDriverByName(gpkg ? "GPKG" : "GeoJSON");
  if (!driver) throw OutputError(path + ": this GDAL has no " + (gpkg ? "GeoPackage" : "GeoJSON") + " driver");
  std::error_code ignored;
  std::filesystem::remove(path, ignored);
  w.ds.reset(driver->Create(path.c_str(), 0, 0, 0, GDT_Unknown, nullptr));
  if (!w.ds) throw OutputError(path + ": cannot create the file" + gdal_reason() + "; check that its folder is writable");
  // GeoPackage readers expect one geometry type per layer; GeoJSON has no layer type.
  w.layer = w.ds->CreateLayer("districts", crs_of.impl_->srs.get(), gpkg ? wkbMultiPolygon : wkbUnknown, nullptr);
  if (!w.layer) throw OutputError(path + ": cannot create the layer" + gdal_reason());
  for (const Field& f : w.fields) {
    const OGRFieldType type = f.type == Field::Type::integer ? OFTInteger64 : f.type == Field::Type::real ? OFTReal : OFTString;
    OGRFieldDefn defn(f.name.c_str(), type);
    if (w.layer->CreateField(&defn) != OGRERR_NONE) {
      throw OutputError(path + ": cannot create the attribute '" + f.name + "'" + gdal_reason());
    }
  }
  // One transaction: a GeoPackage written feature by feature commits each to disk otherwise.
  if (gpkg && w.layer->StartTransaction() != OGRERR_NONE) {
    throw OutputError(path + ": cannot start writing the layer" + gdal_reason());
  }
}

// Dropped unclosed (a failure elsewhere), the writer leaves no file behind.
DistrictLayerWriter::~DistrictLayerWriter() {
  if (!impl_ || impl_->closed) return;
  CPLPushErrorHandler(CPLQuietErrorHandler);
  impl_->ds.reset();
  CPLPopErrorHandler();
  std::error_code ignored;
  std::filesystem::remove(impl_->path, ignored);
}

void DistrictLayerWriter::add(const DistrictShapes& shapes, DistrictIndex d, std::span<const FieldValue> values) {
  Impl& w = *impl_;
  if (values.size() != w.fields.size()) throw std::invalid_argument("DistrictLayerWriter::add: wrong number of values");
  OGRFeatureUniquePtr feature(OGRFeature::CreateFeature(w.layer->GetLayerDefn()));
  for (std::size_t i = 0; i < values.size(); ++i) {
    const int index = static_cast<int>(i);
    if (const auto* v = std::get_if<std::int64_t>(&values[i])) {
      feature->SetField(index, static_cast<GIntBig>(*v));
    } else if (const auto* x = std::get_if<double>(&values[i])) {
      feature->SetField(index, *x);
    } else if (const auto* s = std::get_if<std::string>(&values[i])) {
      feature->SetField(index, s->c_str());
    } else {
      feature->SetFieldNull(index);
    }
  }
  const OGRMultiPolygon& shape = *shapes.impl_->districts.at(d);
  if (w.format == LayerFormat::geojson && shape.getNumGeometries() == 1) {
    feature->SetGeometry(shape.getGeometryRef(0));
  } else {
    feature->SetGeometry(&shape);
  }
  CPLPushErrorHandler(CPLQuietErrorHandler);
  struct PopHandler { ~PopHandler() { CPLPopErrorHandler(); } } pop;
  CPLErrorReset();
  if (w.layer->CreateFeature(feature.get()) != OGRERR_NONE) {
    throw OutputError(w.path + ": cannot write a district" + gdal_reason() + "; check the disk");
  }
}

void DistrictLayerWriter::close() {
  Impl& w = *impl_;
  CPLPushErrorHandler(CPLQuietErrorHandler);
  struct PopHandler { ~PopHandler() { CPLPopErrorHandler(); } } pop;
  CPLErrorReset();
  const bool committed = w.format != LayerFormat::geopackage || w.layer->CommitTransaction() == OGRERR_NONE;
  w.ds.reset();  // closes the file
  if (!committed || CPLGetLastErrorType() >= CE_Failure) {
    throw OutputError(w.path + ": the file could not be written" + gdal_reason() + "; check the disk");
  }
  // GDAL does not flush to disk; the caller renames the file into place, so it must be complete.
  const int fd = ::open(w.path.c_str(), O_RDONLY);
  const bool synced = fd >= 0 && ::fsync(fd) == 0;
  if (fd >= 0) ::close(fd);
  if (!synced) throw OutputError(w.path + ": the file could not be flushed to disk; check the disk");
  w.closed = true;
}

}  // namespace planmill::geo
