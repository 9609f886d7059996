// The units' shapes from GeoJSON for the report's maps: polygons and multipolygons by the map's id
// property, units without a feature, features naming no unit, and one-line errors on bad files.
#include <gtest/gtest.h>

#include <fstream>
#include <string>

#include "planmill/base/error.hpp"
#include "planmill/report/unit_shapes.hpp"
#include "run_jobs.hpp"
#include "small_graphs.hpp"

namespace planmill::report {
namespace {

namespace fs = std::filesystem;

std::string write(const fs::path& dir, const std::string& name, const std::string& text) {
  const fs::path p = dir / name;
  std::ofstream(p) << text;
  return p.string();
}

// What a reader's error says, or "" when it reads.
std::string error_of(const std::string& path, const UnitGraph& g) {
  try {
    (void)read_unit_shapes(path, g, "unit");
  } catch (const InputError& e) {
    return e.what();
  }
  return {};
}

TEST(UnitShapes, ReadsPolygonsAndMultipolygonsByTheIdProperty) {
  const fs::path dir = test::scratch_dir("planmill-unit-shapes", std::to_string(::getpid()));
  const UnitGraph g = test::grid(1, 3);  // units "0", "1", "2"
  const std::string path = write(dir, "u.geojson", R"({"type":"FeatureCollection","features":[
    {"type":"Feature","properties":{"unit":"0"},"geometry":{"type":"Polygon","coordinates":[[[0,0],[1,0],[1,1],[0,0]],[[0.2,0.2],[0.3,0.2],[0.3,0.3],[0.2,0.2]]]}},
    {"type":"Feature","properties":{"unit":2},"geometry":{"type":"MultiPolygon","coordinates":[[[[2,0],[3,0],[3,1],[2,0]]],[[[4,0],[5,0],[5,1],[4,0]]]]}},
    {"type":"Feature","properties":{"unit":"9"},"geometry":{"type":"Polygon","coordinates":[[[9,9],[9,8],[8,8],[9,9]]]}}
  ]})");
  const UnitShapes s = read_unit_shapes(path, g, "unit");
  ASSERT_EQ(s.shapes.size(), 3u);
  ASSERT_EQ(s.shapes[0].size(), 1u);     // one polygon
  ASSERT_EQ(s.shapes[0][0].size(), 2u);  // its outer ring and its hole
  EXPECT_EQ(s.shapes[0][0][0].size(), 4u);
  EXPECT_EQ(s.shapes[0][0][0][1], (std::pair<double, double>{1, 0}));
  EXPECT_EQ(s.shapes[0][0][1][1], (std::pair<double, double>{0.3, 0.2}));
  EXPECT_TRUE(s.shapes[1].empty());
  EXPECT_EQ(s.shapes[2].size(), 2u);  // a whole-number id is read as its decimal text
  EXPECT_EQ(s.without_shape, 1u);
  EXPECT_EQ(s.unknown_features, 1u);
  fs::remove_all(dir);
}

TEST(UnitShapes, BadFilesAreOneLineErrorsNamingTheFileAndFeature) {
  const fs::path dir = test::scratch_dir("planmill-unit-shapes-bad", std::to_string(::getpid()));
  const UnitGraph g = test::grid(1, 2);
  EXPECT_NE(error_of((dir / "missing.geojson").string(), g).find("missing.geojson"), std::string::npos);
  EXPECT_NE(error_of(write(dir, "a.geojson", "{not json"), g).find("is not a GeoJSON FeatureCollection"),
            std::string::npos);
  const std::string no_id = error_of(
      write(dir, "b.geojson", R"({"features":[{"properties":{"id":"0"},"geometry":null}]})"), g);
  EXPECT_NE(no_id.find("b.geojson"), std::string::npos) << no_id;
  EXPECT_NE(no_id.find("features[0]"), std::string::npos) << no_id;
  EXPECT_NE(no_id.find("has no property 'unit'"), std::string::npos) << no_id;
  const std::string bad_point = error_of(write(dir, "c.geojson", R"({"features":[{"properties":{"unit":"1"},
      "geometry":{"type":"Polygon","coordinates":[[[0,"x"]]]}}]})"), g);
  EXPECT_NE(bad_point.find("features[0]"), std::string::npos) << bad_point;
  EXPECT_NE(bad_point.find("[x, y] numbers"), std::string::npos) << bad_point;
  const std::string line = error_of(write(dir, "d.geojson", R"({"features":[{"properties":{"unit":"1"},
      "geometry":{"type":"LineString","coordinates":[[0,0],[1,1]]}}]})"), g);
  EXPECT_NE(line.find("'LineString' is not a Polygon or MultiPolygon"), std::string::npos) << line;
  for (const auto& e : {no_id, bad_point, line}) EXPECT_EQ(e.find('\n'), std::string::npos) << e;
  fs::remove_all(dir);
}

}  // namespace
}  // namespace planmill::report
