// planmill export --gis against shapely (Debian python3-shapely), driven as a user runs it: every
// district of the GeoJSON layer is the union of its units' shapes from synth's units.geojson
// (shapely.ops.unary_union; symmetric difference of area below 1e-9 of the district's), its area
// the sum of its units' areas to 1e-9 relative, k districts per plan, and its attributes those of
// district-tallies.csv (tests/export/gis_check.py).
#include <gtest/gtest.h>
#include <unistd.h>

#include "command_output.hpp"
#include "run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

TEST(ExportGisReference, GeoJsonDistrictsAreTheUnionsOfTheirUnitsAsShapelyComputesThem) {
  const fs::path dir = test::scratch_dir("planmill-export-gis-reference", std::to_string(::getpid()));
  const fs::path layer = dir / "districts.geojson";
  test::run_and_export(dir, "chains = 2\nsteps = 200\nburn_in = 20\nseed = 8",
                       "--every 30 --tallies --gis " + layer.string());
  ASSERT_TRUE(fs::exists(layer));
  const std::string check = std::string("/usr/bin/python3 ") + PLANMILL_SOURCE_DIR + "/tests/export/gis_check.py " +
                            layer.string() + " " + (dir / "state" / "units.geojson").string() + " " +
                            (dir / "csv" / "plans").string() + " " + (dir / "csv" / "district-tallies.csv").string() +
                            " 4 unit 2>&1";
  EXPECT_EQ(test::command_output(check), "ok\n");
  fs::remove_all(dir);
}

}  // namespace
}  // namespace planmill
