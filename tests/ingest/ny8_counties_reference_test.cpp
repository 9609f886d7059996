// "Split only as needed" on a real public map with counties: the 281 census tracts of eight
// upstate New York counties (1990 census, Waller and Gotway 2004), as Debian's r-cran-spdata
// ships them (shapes/NY8_utm18.shp, UTM zone 18). Each tract's county is digits 3-5 of its FIPS
// key (AREAKEY: 2 state, 3 county, 6 tract digits), cut out by GDAL's ogr2ogr (Debian gdal-bin)
// into a GeoPackage, which `planmill ingest` reads as a user would. The job asks for 8 districts
// at +/-5% with county_splits_max = "fewest". Outside checks: the lower bound (counties holding
// more people than a district may) against R's sf (Debian r-cran-sf) reading the shapefile and
// summing POP8 by county, tests/ingest/ny8_counties.R; every recorded plan's county splits
// recounted from the exported plans and the unit table, at most the cap.
#include <gtest/gtest.h>

#include <map>
#include <regex>
#include <set>
#include <sstream>

#include <nlohmann/json.hpp>

#include "ingest_support.hpp"

namespace planmill::test {
namespace {

namespace fs = std::filesystem;

std::string ny8_layer() {
  std::string path = command_output("dpkg -L r-cran-spdata | grep 'shapes/NY8_utm18.shp$'");
  while (!path.empty() && path.back() == '\n') path.pop_back();
  return path;
}

TEST(Ny8Counties, TheFewestSplitsMeetRsLowerBoundAndEveryPlanHoldsTheCap) {
  const std::string layer = ny8_layer();
  ASSERT_FALSE(layer.empty()) << "r-cran-spdata is not installed (scripts/install-deps test installs it)";
  const fs::path dir = scratch_dir("planmill_ny8", "fewest");
  ASSERT_EQ(shell("ogr2ogr -f GPKG " + (dir / "ny8.gpkg").string() + " '" + layer +
                  "' -dialect SQLite -nln tracts -sql \"SELECT AREAKEY, CAST(POP8 AS INTEGER) AS pop, "
                  "substr(AREAKEY, 3, 3) AS county, geometry FROM NY8_utm18\" 2>/dev/null"),
            0);
  const std::string bin = PLANMILL_BINARY;
  ASSERT_EQ(shell(bin + " ingest " + (dir / "ny8.gpkg").string() +
                  " --id AREAKEY --population pop --county county --out " + (dir / "map").string() + " 2>/dev/null"),
            0);
  const fs::path job = dir / "map" / "job.toml";
  std::string text = read_text(job);
  text = std::regex_replace(text, std::regex("# count = 2[^\n]*"), "count = 8");
  std::ofstream(job, std::ios::trunc) << text << "county_splits_max = \"fewest\"\n"
                                      << "[sampler]\nkernel = \"recombination\"\nchains = 2\nsteps = 30\n"
                                      << "tree_weight_county = 20.0\n";

  const std::string check = command_output(bin + " check " + job.string() + " 2>&1");
  std::smatch m;
  ASSERT_TRUE(std::regex_search(check, m, std::regex("at most ([0-9]+) counties split: split only as needed, the fewest "
                                                     "found in 100 attempts \\([0-9]+ valid plans\\); ([0-9]+) count")))
      << check;
  const std::size_t cap = std::stoul(m[1]), lower = std::stoul(m[2]);

  // R sf, on the shapefile as shipped: counties whose POP8 total exceeds floor(1.05 * total / 8).
  const std::string r = command_output(std::string("Rscript ") + PLANMILL_SOURCE_DIR + "/tests/ingest/ny8_counties.R '" +
                                       layer + "' 8 0.05 2>/dev/null");
  std::istringstream rs(r);
  std::size_t r_counties = 0, r_too_big = 0;
  rs >> r_counties >> r_too_big;
  EXPECT_EQ(r_counties, 8U) << r;
  EXPECT_EQ(lower, r_too_big) << r;
  EXPECT_GE(r_too_big, 1U) << r;  // Onondaga alone holds more than three districts' worth
  EXPECT_GE(cap, lower);

  ASSERT_EQ(shell(bin + " run " + job.string() + " --output " + (dir / "run").string() + " --quiet >/dev/null 2>&1"), 0);
  ASSERT_EQ(shell(bin + " export " + (dir / "run").string() + " --out " + (dir / "csv").string() +
                  " --every 1 >/dev/null 2>&1"),
            0);
  const auto county_of = unit_column(dir / "map" / "units.csv", 2);
  ASSERT_EQ(county_of.size(), 281U);
  std::size_t plans = 0;
  for (const auto& entry : fs::directory_iterator(dir / "csv" / "plans")) {
    const std::size_t split = areas_split(entry.path(), county_of);
    EXPECT_LE(split, cap) << entry.path();
    EXPECT_GE(split, r_too_big) << entry.path();
    ++plans;
  }
  EXPECT_EQ(plans, 60U);
}

}  // namespace
}  // namespace planmill::test
