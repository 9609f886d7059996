#pragma once
// Small GeoJSON layers written by the tests, and `planmill ingest` run on them as a user would.
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "command_output.hpp"
#include "run_jobs.hpp"

namespace planmill::test {

struct Feature {
  std::string id;
  std::string geometry;    // GeoJSON geometry object, or "null"
  std::string extra = "";  // more properties, e.g. ,"pop":5
};

// A FeatureCollection; `crs` is a GeoJSON crs member (with its trailing comma) or empty.
inline std::filesystem::path write_layer(const std::filesystem::path& path, const std::vector<Feature>& features,
                                         const std::string& crs = "") {
  std::ofstream out(path);
  out << "{\"type\":\"FeatureCollection\"," << crs << "\"features\":[\n";
  for (std::size_t i = 0; i < features.size(); ++i) {
    out << (i ? ",\n" : "") << "{\"type\":\"Feature\",\"properties\":{\"unit\":\"" << features[i].id << "\""
        << features[i].extra << "},\"geometry\":" << features[i].geometry << "}";
  }
  out << "]}\n";
  return path;
}

// A closed rectangle as a GeoJSON Polygon.
inline std::string box(double x0, double y0, double x1, double y1) {
  const auto p = [](double x, double y) { return "[" + std::to_string(x) + "," + std::to_string(y) + "]"; };
  return "{\"type\":\"Polygon\",\"coordinates\":[[" + p(x0, y0) + "," + p(x1, y0) + "," + p(x1, y1) + "," + p(x0, y1) + "," +
         p(x0, y0) + "]]}";
}

// `planmill ingest LAYER --id unit --out OUT ARGS`, its output joined with its errors.
inline std::string ingest(const std::filesystem::path& layer, const std::filesystem::path& out, const std::string& args) {
  return command_output(std::string(PLANMILL_BINARY) + " ingest " + layer.string() + " --id unit --out " + out.string() + " " + args +
                        " 2>&1");
}

}  // namespace planmill::test
