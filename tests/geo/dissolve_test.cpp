// The geo part on a hand-drawn layer whose answers are known by hand: a 3 x 3 grid of unit
// squares "gI_J" plus a square "far" standing apart. District 0 = the eight outer cells (a ring:
// one polygon with one hole, area 8), district 1 = the centre cell and "far" (two pieces, area 2).
#include <gtest/gtest.h>
#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <stdexcept>

#include "planmill/base/error.hpp"
#include "planmill/geo/districts.hpp"

namespace planmill::geo {
namespace {

namespace fs = std::filesystem;

std::string square(double x, double y) {
  const auto p = [](double a, double b) { return "[" + std::to_string(a) + "," + std::to_string(b) + "]"; };
  return "{\"type\":\"Polygon\",\"coordinates\":[[" + p(x, y) + "," + p(x + 1, y) + "," + p(x + 1, y + 1) + "," + p(x, y + 1) + "," +
         p(x, y) + "]]}";
}

struct Grid {
  fs::path file;
  std::vector<std::string> ids;
  std::vector<DistrictIndex> labels;
};

Grid write_grid() {
  Grid g;
  g.file = fs::temp_directory_path() / ("planmill-geo-" + std::to_string(::getpid()) + ".geojson");
  std::ofstream out(g.file);
  out << "{\"type\":\"FeatureCollection\",\"features\":[";
  for (int i = 0; i < 3; ++i) {
    for (int j = 0; j < 3; ++j) {
      g.ids.push_back("g" + std::to_string(i) + "_" + std::to_string(j));
      g.labels.push_back(i == 1 && j == 1 ? 1 : 0);
      out << "{\"type\":\"Feature\",\"properties\":{\"unit\":\"" << g.ids.back() << "\"},\"geometry\":" << square(i, j) << "},";
    }
  }
  g.ids.push_back("far");
  g.labels.push_back(1);
  out << "{\"type\":\"Feature\",\"properties\":{\"unit\":\"far\"},\"geometry\":" << square(10, 10) << "},";
  // A feature of no unit of the map: counted, left out.
  out << "{\"type\":\"Feature\",\"properties\":{\"unit\":\"stray\"},\"geometry\":" << square(20, 20) << "}]}\n";
  return g;
}

TEST(Dissolve, RingWithAHoleAndADistrictInTwoPieces) {
  const Grid g = write_grid();
  const UnitShapes units(g.file.string(), "unit", g.ids, "--geometry");
  EXPECT_EQ(units.unit_count(), 10u);
  EXPECT_EQ(units.extra_features(), 1u);
  const DistrictShapes d(units, g.labels, 2);
  ASSERT_EQ(d.district_count(), 2u);
  EXPECT_EQ(d.pieces(0), 1u);
  EXPECT_DOUBLE_EQ(d.planar_area(0), 8.0);
  const Outline ring = d.outline(0);
  ASSERT_EQ(ring.size(), 1u);
  ASSERT_EQ(ring[0].size(), 2u);  // the outer ring and the hole where the centre cell is
  for (const Point& p : ring[0][1]) {
    EXPECT_TRUE(p[0] == 1 || p[0] == 2) << p[0];
    EXPECT_TRUE(p[1] == 1 || p[1] == 2) << p[1];
  }
  EXPECT_EQ(d.pieces(1), 2u);
  EXPECT_DOUBLE_EQ(d.planar_area(1), 2.0);
  EXPECT_THROW(DistrictShapes(units, std::vector<DistrictIndex>(10, 2), 2), std::invalid_argument);
  EXPECT_THROW(DistrictShapes(units, std::vector<DistrictIndex>(9, 0), 2), std::invalid_argument);
  fs::remove(g.file);
}

TEST(Dissolve, AUnitWithoutAShapeIsNamed) {
  Grid g = write_grid();
  g.ids.push_back("nowhere");
  try {
    const UnitShapes units(g.file.string(), "unit", g.ids, "--geometry");
    FAIL() << "read a map with a unit that has no shape";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("1 unit(s) of the map have no shape in the layer (first: 'nowhere')"), std::string::npos) << e.what();
  }
  fs::remove(g.file);
}

TEST(Dissolve, FormatFromTheNameOrTheOption) {
  EXPECT_EQ(layer_format("a/b.GPKG", "", "--gis"), LayerFormat::geopackage);
  EXPECT_EQ(layer_format("b.geojson", "", "--gis"), LayerFormat::geojson);
  EXPECT_EQ(layer_format("b.json", "", "--gis"), LayerFormat::geojson);
  EXPECT_EQ(layer_format("b.gpkg", "geojson", "--gis"), LayerFormat::geojson);
  EXPECT_THROW((void)layer_format("b.shp", "", "--gis"), InputError);
  EXPECT_THROW((void)layer_format("b.gpkg", "kml", "--gis"), InputError);
}

}  // namespace
}  // namespace planmill::geo
