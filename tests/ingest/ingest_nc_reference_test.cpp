// planmill ingest on a real layer against outside references: the North Carolina counties that
// Debian's r-cran-sf ships (its shape/nc.shp: 100 counties, longitude/latitude on NAD27, the
// Clarke 1866 ellipsoid), driven through the CLI as a user would.
// - Neighbours: rook and queen lists equal R's spdep::poly2nb(queen = FALSE / TRUE) (Debian
//   r-cran-spdep, computed here by Rscript, tests/ingest/nc_neighbours.R). poly2nb counts two
//   polygons as rook neighbours when they share more than one boundary point, queen when they
//   share one, within its snap (default sqrt(.Machine$double.eps), about 1.5e-8 degrees, some
//   1.7 mm); ingest runs without --snap: shared sides must coincide. The layer's shared sides are
//   drawn with the same vertices on both sides, so the two criteria meet; a difference would show.
// - Planar measures: the layer projected by GDAL's ogr2ogr (Debian gdal-bin) to an Albers equal-
//   area projection on NAD27 itself (no datum shift), as GeoJSON with 17 significant digits; ingest --planar on that file against Python's shapely (Debian python3-shapely) on the
//   same file (tests/ingest/planar_check.py): areas, perimeters, outer boundaries and every shared
//   boundary length to 1e-9 relative, the rook pairs exactly.
// - Lon/lat against projected: ingest's geodesic areas on the Clarke 1866 ellipsoid against the
//   planar areas of the equal-area projection of the same vertices. The projection keeps areas of
//   the true shapes; the two differ in how an edge between vertices is drawn (a geodesic, or a
//   straight line in the projection), by about L * sagitta per edge of length L. On nc.shp as
//   shipped (edges up to tens of km along the state lines) that gave 3e-5 of a county's area, too
//   coarse to tell Clarke 1866 from WGS 84 (2e-5 apart in area), so for areas both sides measure
//   the layer densified by ogr2ogr -segmentize 0.002 (degrees; GDAL interpolates in lon/lat),
//   where they agree to 6e-10; the tolerance is 1e-8. (Densified, two sides of one border are
//   interpolated from opposite ends and no longer coincide to the last bit, so neighbours and
//   lengths are compared on the layer as shipped.) Lengths are not kept by Albers: its scale is k along parallels and 1/k
//   along meridians (Snyder, Map Projections - A Working Manual, 1987, ch. 14; from memory),
//   |k - 1| of the order of 1e-4 over NC between standard parallels 34.33 and 36.17, so perimeters
//   and shared lengths must agree to 5e-3 relative and differ by more than 1e-5 (the projection
//   bends lengths, and the comparison must see that).
#include <gtest/gtest.h>

#include <cmath>
#include <map>
#include <set>

#include "ingest_support.hpp"
#include "planmill/io/csv.hpp"

namespace planmill::test {
namespace {

namespace fs = std::filesystem;

constexpr const char* kAlbersOnNad27 =
    "+proj=aea +lat_0=33.75 +lon_0=-79 +lat_1=34.33 +lat_2=36.17 +datum=NAD27 +units=m +no_defs";

std::string nc_layer() {
  std::string path = command_output("dpkg -L r-cran-sf | grep 'shape/nc.shp$'");
  while (!path.empty() && path.back() == '\n') path.pop_back();
  return path;
}

std::set<std::pair<std::string, std::string>> pairs_of(const fs::path& csv) {
  std::set<std::pair<std::string, std::string>> pairs;
  for (const CsvRow& row : read_csv_file(csv.string()).rows) {
    pairs.emplace(std::min(row.fields[0], row.fields[1]), std::max(row.fields[0], row.fields[1]));
  }
  return pairs;
}

// FIPS -> column -> value of units.csv.
std::map<std::string, std::map<std::string, double>> units_of(const fs::path& out) {
  const CsvTable t = read_csv_file((out / "units.csv").string());
  std::map<std::string, std::map<std::string, double>> units;
  for (const CsvRow& row : t.rows) {
    for (const char* c : {"area", "perimeter", "outer"}) units[row.fields[t.column_index("FIPS")]][c] = std::stod(row.fields[t.column_index(c)]);
  }
  return units;
}

std::map<std::pair<std::string, std::string>, double> lengths_of(const fs::path& out) {
  std::map<std::pair<std::string, std::string>, double> lengths;
  for (const CsvRow& row : read_csv_file((out / "adjacency.csv").string()).rows) {
    lengths[{std::min(row.fields[0], row.fields[1]), std::max(row.fields[0], row.fields[1])}] = std::stod(row.fields[2]);
  }
  return lengths;
}

class NcCounties : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    dir_ = new fs::path(scratch_dir("ingest-nc", std::to_string(::getpid())));
    *layer_ = nc_layer();
  }
  static void TearDownTestSuite() {
    fs::remove_all(*dir_);
    delete dir_;
  }
  static std::string nc_ingest(const fs::path& layer, const std::string& out, const std::string& args) {
    return command_output(std::string(PLANMILL_BINARY) + " ingest " + layer.string() + " --id FIPS --keep NAME --out " +
                          (*dir_ / out).string() + " " + args + " 2>&1");
  }
  static fs::path* dir_;
  static std::string* layer_;
};
fs::path* NcCounties::dir_ = nullptr;
std::string* NcCounties::layer_ = new std::string;

TEST_F(NcCounties, RookAndQueenNeighboursAreThoseOfSpdepPoly2nb) {
  ASSERT_TRUE(fs::is_regular_file(*layer_)) << "no shape/nc.shp: install r-cran-sf (scripts/install-deps test)";
  for (const std::string mode : {"rook", "queen"}) {
    const std::string run = nc_ingest(*layer_, mode, mode == "queen" ? "--queen" : "");
    ASSERT_NE(run.find("ingest: 100 units"), std::string::npos) << run;
    ASSERT_NE(run.find("geodesic"), std::string::npos) << run;
    const fs::path spdep = *dir_ / (mode + "-spdep.csv");
    const std::string r = command_output(std::string("Rscript ") + PLANMILL_SOURCE_DIR + "/tests/ingest/nc_neighbours.R " + *layer_ +
                                         " FIPS " + mode + " " + spdep.string() + " 2>&1");
    ASSERT_EQ(r, "") << r;
    const auto ours = pairs_of(*dir_ / mode / "adjacency.csv"), theirs = pairs_of(spdep);
    EXPECT_GT(theirs.size(), 200u);
    std::vector<std::pair<std::string, std::string>> only_ours, only_theirs;
    std::set_difference(ours.begin(), ours.end(), theirs.begin(), theirs.end(), std::back_inserter(only_ours));
    std::set_difference(theirs.begin(), theirs.end(), ours.begin(), ours.end(), std::back_inserter(only_theirs));
    EXPECT_TRUE(only_ours.empty()) << mode << ": " << only_ours.size() << " pairs only ingest lists, e.g. " << only_ours[0].first << "," << only_ours[0].second;
    EXPECT_TRUE(only_theirs.empty()) << mode << ": " << only_theirs.size() << " pairs only poly2nb lists, e.g. " << only_theirs[0].first << ","
                                     << only_theirs[0].second;
  }
}

TEST_F(NcCounties, ProjectedMeasuresAreShapelysAndAgreeWithTheEllipsoid) {
  ASSERT_TRUE(fs::is_regular_file(*layer_)) << "no shape/nc.shp: install r-cran-sf (scripts/install-deps test)";
  const fs::path dense = *dir_ / "nc-dense.geojson", projected = *dir_ / "nc-albers.geojson",
                 dense_projected = *dir_ / "nc-dense-albers.geojson";
  const std::string to_albers = "ogr2ogr -f GeoJSON -lco SIGNIFICANT_FIGURES=17 -t_srs '" + std::string(kAlbersOnNad27) + "' ";
  ASSERT_EQ(command_output(to_albers + projected.string() + " " + *layer_ + " 2>&1"), "");
  ASSERT_EQ(command_output("ogr2ogr -f GeoJSON -lco SIGNIFICANT_FIGURES=17 -segmentize 0.002 " + dense.string() + " " + *layer_ + " 2>&1"), "");
  ASSERT_EQ(command_output(to_albers + dense_projected.string() + " " + dense.string() + " 2>&1"), "");
  // ogr2ogr's GeoJSON keeps no crs member for a projection without an EPSG code: --planar says
  // what the coordinates are (metres of the projection).
  const std::string run = nc_ingest(projected, "albers", "--planar");
  ASSERT_NE(run.find("ingest: 100 units"), std::string::npos) << run;
  const std::string check = command_output(std::string("/usr/bin/python3 ") + PLANMILL_SOURCE_DIR + "/tests/ingest/planar_check.py " +
                                           projected.string() + " " + (*dir_ / "albers").string() + " rook FIPS 2>&1");
  EXPECT_EQ(check.rfind("ok ", 0), 0u) << check;

  const std::string lonlat = nc_ingest(*layer_, "lonlat", "");
  ASSERT_NE(nc_ingest(dense, "dense-lonlat", "").find("ingest: 100 units"), std::string::npos);
  ASSERT_NE(nc_ingest(dense_projected, "dense-albers", "--planar").find("ingest: 100 units"), std::string::npos);
  ASSERT_NE(lonlat.find("geodesic on the ellipsoid of North_American_Datum_1927"), std::string::npos) << lonlat;  // Clarke 1866
  const auto geodesic = units_of(*dir_ / "lonlat"), planar = units_of(*dir_ / "albers");
  const auto dense_geodesic = units_of(*dir_ / "dense-lonlat"), dense_planar = units_of(*dir_ / "dense-albers");
  ASSERT_EQ(geodesic.size(), 100u);
  double worst_area = 0, worst_length = 0;
  for (const auto& [fips, g] : geodesic) {
    worst_area = std::max(worst_area, std::abs(dense_geodesic.at(fips).at("area") / dense_planar.at(fips).at("area") - 1));
    worst_length = std::max(worst_length, std::abs(g.at("perimeter") / planar.at(fips).at("perimeter") - 1));
  }
  const auto g_lengths = lengths_of(*dir_ / "lonlat"), p_lengths = lengths_of(*dir_ / "albers");
  ASSERT_EQ(g_lengths.size(), p_lengths.size());  // the same rook pairs, projected or not
  for (const auto& [pair, length] : g_lengths) {
    ASSERT_TRUE(p_lengths.count(pair)) << pair.first << "," << pair.second;
    worst_length = std::max(worst_length, std::abs(length / p_lengths.at(pair) - 1));
  }
  EXPECT_LT(worst_area, 1e-8);
  EXPECT_LT(worst_length, 5e-3);
  EXPECT_GT(worst_length, 1e-5);  // Albers does bend lengths: the comparison sees the projection
  std::cout << "NC: largest relative difference, ellipsoid vs Albers: areas " << worst_area << ", lengths " << worst_length << "\n";
}

}  // namespace
}  // namespace planmill::test
