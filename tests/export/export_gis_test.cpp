// planmill export --gis end to end, as a user runs it on synth's state (its job names the units'
// shapes, units.geojson): the layer read back with GDAL has k features per plan, each a valid
// dissolved (multi)polygon whose planar area is its district's area (synth's rectangles tile the
// state exactly, so the union loses nothing), and whose attributes are the row of the district
// tallies export writes beside it; bad input is one line, exit 2, and no file left behind.
#include <gtest/gtest.h>
#include <ogrsf_frmts.h>
#include <unistd.h>

#include <cmath>
#include <fstream>
#include <map>
#include <sstream>

#include "run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using test::split_csv_line;

constexpr std::size_t kDistricts = 4;  // write_synth_job's state

class ExportGis : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    dir_ = new fs::path(test::scratch_dir("planmill-export-gis", std::to_string(::getpid())));
    test::run_and_export(*dir_, "chains = 2\nsteps = 120\nburn_in = 20\nseed = 6",
                         "--every 40 --tallies --gis " + (*dir_ / "districts.gpkg").string());
  }
  static void TearDownTestSuite() {
    fs::remove_all(*dir_);
    delete dir_;
  }
  static fs::path run() { return *dir_ / "run"; }
  // `planmill export RUN --out DIR/OUT ARGS`; stderr in err().
  static int export_run(const std::string& out, const std::string& args) {
    return test::shell(std::string(PLANMILL_BINARY) + " export " + run().string() + " --out " + (*dir_ / out).string() + " " +
                       args + " >" + (*dir_ / "stdout").string() + " 2>" + (*dir_ / "err").string());
  }
  static std::string err() { return test::read_text(*dir_ / "err"); }
  // Files of `folder` (hidden ones too), for "nothing left behind".
  static std::vector<std::string> files_in(const fs::path& folder) {
    std::vector<std::string> names;
    for (const auto& e : fs::directory_iterator(folder)) names.push_back(e.path().filename().string());
    std::sort(names.begin(), names.end());
    return names;
  }
  static fs::path* dir_;
};
fs::path* ExportGis::dir_ = nullptr;

// district-tallies.csv as "plan/district" -> column -> text, plan named cC_rR as in the layer.
std::map<std::string, std::map<std::string, std::string>> read_tallies(const fs::path& file) {
  std::ifstream in(file);
  std::string line;
  std::getline(in, line);
  const std::vector<std::string> header = split_csv_line(line);
  std::map<std::string, std::map<std::string, std::string>> rows;
  while (std::getline(in, line)) {
    const std::vector<std::string> cells = split_csv_line(line);
    std::map<std::string, std::string> row;
    for (std::size_t i = 0; i < header.size(); ++i) row[header[i]] = cells.at(i);
    rows["c" + row["chain"] + "_r" + row["record"] + "/" + row["district"]] = row;
  }
  return rows;
}

struct LayerFeature {
  std::map<std::string, std::string> fields;  // as GDAL gives them as text; "" when null
  OGRGeometryUniquePtr geometry;
};

std::vector<LayerFeature> read_layer(const fs::path& file, std::string* layer_type = nullptr) {
  GDALAllRegister();
  GDALDatasetUniquePtr ds(GDALDataset::Open(file.c_str(), GDAL_OF_VECTOR | GDAL_OF_READONLY));
  EXPECT_TRUE(ds) << file;
  std::vector<LayerFeature> out;
  if (!ds) return out;
  EXPECT_EQ(ds->GetLayerCount(), 1);
  OGRLayer& layer = *ds->GetLayer(0);
  EXPECT_STREQ(layer.GetName(), "districts");
  if (layer_type) *layer_type = OGRGeometryTypeToName(layer.GetGeomType());
  for (const OGRFeatureUniquePtr& f : layer) {
    LayerFeature lf;
    for (int i = 0; i < f->GetFieldCount(); ++i) {
      lf.fields[f->GetFieldDefnRef(i)->GetNameRef()] = f->IsFieldSetAndNotNull(i) ? f->GetFieldAsString(i) : "";
    }
    lf.geometry.reset(f->GetGeometryRef()->clone());
    out.push_back(std::move(lf));
  }
  return out;
}

double number(const std::string& text) { return std::stod(text); }

TEST_F(ExportGis, EveryDistrictOfEveryChosenPlanIsOneValidDissolvedShapeWithItsTallies) {
  std::string type;
  const std::vector<LayerFeature> features = read_layer(*dir_ / "districts.gpkg", &type);
  const auto tallies = read_tallies(*dir_ / "csv" / "district-tallies.csv");
  EXPECT_EQ(type, "Multi Polygon");
  ASSERT_EQ(features.size(), tallies.size());  // 2 chains x 3 records (0, 40, 80) x 4 districts
  EXPECT_EQ(features.size(), 2 * 3 * kDistricts);
  std::map<std::string, std::size_t> per_plan;
  double total_pop = 0;
  for (const LayerFeature& f : features) {
    const std::string key = f.fields.at("plan") + "/" + f.fields.at("district");
    ASSERT_TRUE(tallies.count(key)) << key;
    const auto& row = tallies.at(key);
    ++per_plan[f.fields.at("plan")];
    EXPECT_EQ(f.fields.at("chain"), row.at("chain"));
    EXPECT_EQ(f.fields.at("record"), row.at("record"));
    EXPECT_EQ(f.fields.at("step"), row.at("step"));
    EXPECT_EQ(f.fields.at("population"), row.at("population")) << key;
    for (const auto& [column, value] : row) {
      if (column == "area" || column == "perimeter") {
        EXPECT_NEAR(number(f.fields.at(column)), number(value), 1e-9 * number(value)) << key << " " << column;
      } else {
        EXPECT_EQ(f.fields.at(column), value) << key << " " << column;  // groups and votes, whole
      }
    }
    if (f.fields.at("plan") == "c0_r0") total_pop += number(row.at("population"));
    // Synth's units are rectangles with corners on a 1/128 km lattice tiling the state: the
    // union of a district's units has exactly the sum of their areas (up to rounding).
    ASSERT_EQ(wkbFlatten(f.geometry->getGeometryType()), wkbMultiPolygon);
    EXPECT_TRUE(f.geometry->IsValid()) << key;
    EXPECT_NEAR(f.geometry->toMultiPolygon()->get_Area(), number(row.at("area")), 1e-9 * number(row.at("area"))) << key;
  }
  for (const auto& [plan, count] : per_plan) EXPECT_EQ(count, kDistricts) << plan;
  // deviation = (population - ideal) / ideal, ideal = total / k.
  const double ideal = total_pop / kDistricts;
  for (const LayerFeature& f : features) {
    const double pop = number(f.fields.at("population"));
    EXPECT_NEAR(number(f.fields.at("deviation")), (pop - ideal) / ideal, 1e-12);
  }
}

TEST_F(ExportGis, DistrictsOfOnePlanTileTheStateWithoutOverlap) {
  const std::vector<LayerFeature> features = read_layer(*dir_ / "districts.gpkg");
  std::vector<const OGRGeometry*> plan;
  for (const LayerFeature& f : features) {
    if (f.fields.at("plan") == "c1_r80") plan.push_back(f.geometry.get());
  }
  ASSERT_EQ(plan.size(), kDistricts);
  for (std::size_t a = 0; a < plan.size(); ++a) {
    for (std::size_t b = a + 1; b < plan.size(); ++b) {
      OGRGeometryUniquePtr both(plan[a]->Intersection(plan[b]));
      const double overlap = both && OGR_GT_IsSurface(wkbFlatten(both->getGeometryType())) ? both->toPolygon()->get_Area() : 0;
      EXPECT_LT(overlap, 1e-9) << a << " " << b;
    }
  }
}

TEST_F(ExportGis, GeoJsonByExtensionWithAPlanFileAsScoreReadsIt) {
  const fs::path plan = *dir_ / "csv" / "plans" / "chain-1-record-40.csv";
  // A plan CSV of the run (the plan files export wrote) joins the layer under its file name.
  std::ofstream(*dir_ / "given.csv") << test::read_text(plan);
  const fs::path out = *dir_ / "d.geojson";
  ASSERT_EQ(export_run("csv2", "--plans 1:40 --plan-layout none --gis " + out.string() + " --plan-file " +
                                   (*dir_ / "given.csv").string()),
            0)
      << err();
  const std::vector<LayerFeature> features = read_layer(out);
  ASSERT_EQ(features.size(), 2 * kDistricts);
  std::map<std::string, const LayerFeature*> of_record, of_file;
  for (const LayerFeature& f : features) {
    if (f.fields.at("plan") == "c1_r40") of_record[f.fields.at("district")] = &f;
    if (f.fields.at("plan") == (*dir_ / "given.csv").string()) of_file[f.fields.at("district")] = &f;
  }
  ASSERT_EQ(of_record.size(), kDistricts);
  ASSERT_EQ(of_file.size(), kDistricts);
  for (const auto& [district, f] : of_file) {
    EXPECT_EQ(f->fields.at("chain"), "");  // null: a plan file has no chain or record
    EXPECT_EQ(f->fields.at("population"), of_record.at(district)->fields.at("population"));
    EXPECT_TRUE(f->geometry->Equals(of_record.at(district)->geometry.get())) << district;
    // GeoJSON: a Polygon for a district of one piece, a MultiPolygon otherwise.
    const OGRwkbGeometryType t = wkbFlatten(f->geometry->getGeometryType());
    EXPECT_TRUE(t == wkbPolygon || (t == wkbMultiPolygon && f->geometry->toMultiPolygon()->getNumGeometries() > 1));
  }
  // --gis-format overrides the name.
  ASSERT_EQ(export_run("csv3", "--plans 0:0 --gis " + (*dir_ / "d.layer").string() + " --gis-format geojson"), 0) << err();
  EXPECT_EQ(read_layer(*dir_ / "d.layer").size(), kDistricts);
}

TEST_F(ExportGis, BadInputIsOneLineExitTwoAndLeavesNoFile) {
  const fs::path bad = *dir_ / "bad";
  fs::create_directories(bad);
  // The units' shapes without unit u... of the map: synth's GeoJSON less its first feature.
  std::string geojson = test::read_text(*dir_ / "state" / "units.geojson");
  const std::size_t first = geojson.find("{\"type\":\"Feature\"");
  const std::size_t second = geojson.find("{\"type\":\"Feature\"", first + 1);
  ASSERT_NE(second, std::string::npos);
  std::ofstream(bad / "fewer.geojson") << geojson.substr(0, first) << geojson.substr(second);
  std::ofstream(bad / "lines.geojson")
      << R"({"type":"FeatureCollection","features":[{"type":"Feature","properties":{"unit":"x"},"geometry":{"type":"LineString","coordinates":[[0,0],[1,1]]}}]})";
  std::ofstream(bad / "plan.csv") << "unit,district\nnobody,1\n";
  const std::string gis = " --gis " + (bad / "out.gpkg").string();
  const std::vector<std::pair<std::string, std::string>> cases = {
      {"--plans 0:0" + gis + " --geometry " + (bad / "fewer.geojson").string(), "1 unit(s) of the map have no shape in the layer"},
      {"--plans 0:0" + gis + " --geometry " + (bad / "missing.geojson").string(), "the units' shapes are not there"},
      {"--plans 0:0" + gis + " --geometry " + (bad / "lines.geojson").string(), "have no shape in the layer"},
      {"--plans 0:0" + gis + " --geometry-id nosuch", "no attribute 'nosuch' in the layer"},
      {"--plans 0:0 --gis " + (bad / "out.shp").string(), "cannot tell the GIS format from the file name"},
      {"--plans 0:0" + gis + " --gis-format kml", "unknown format 'kml'"},
      {gis, "a GIS layer of districts needs plans"},
      {"--plans 0:0" + gis + " --plan-file " + (bad / "plan.csv").string(), "plan.csv"},
      {"--plans 0:0 --plan-file " + (bad / "plan.csv").string(), "name the layer to write with --gis"},
  };
  const std::vector<std::string> before = files_in(bad);
  for (const auto& [args, message] : cases) {
    EXPECT_EQ(export_run("bad/out", args), 2) << args << "\n" << err();
    const std::string e = err();
    EXPECT_NE(e.find(message), std::string::npos) << args << "\n" << e;
    EXPECT_EQ(std::count(e.begin(), e.end(), '\n'), 1) << e;
    EXPECT_EQ(files_in(bad), before) << args;  // no layer, no partial file, no output folder
  }
}

TEST_F(ExportGis, AJobWithoutShapesIsToldToNameThem) {
  // The same state run from a job that names no map.geometry.
  const fs::path state = *dir_ / "state";
  std::string job = test::read_text(state / "job.toml");
  const std::size_t at = job.find("geometry = ");
  ASSERT_NE(at, std::string::npos);
  job.erase(at, job.find('\n', at) - at + 1);
  std::ofstream(state / "no-shapes.toml") << job;
  const std::string bin = PLANMILL_BINARY, run2 = (*dir_ / "run2").string();
  ASSERT_EQ(test::shell(bin + " run " + (state / "no-shapes.toml").string() + " --output " + run2 + " --quiet >/dev/null 2>&1"), 0);
  const fs::path gis = *dir_ / "none.gpkg";
  EXPECT_EQ(test::shell(bin + " export " + run2 + " --out " + (*dir_ / "none").string() + " --plans 0:0 --gis " + gis.string() +
                        " 2>" + (*dir_ / "err").string() + " >/dev/null"),
            2);
  EXPECT_NE(err().find("names no shapes of its units (map.geometry)"), std::string::npos) << err();
  EXPECT_FALSE(fs::exists(gis));
  // Named on the command line, the shapes serve.
  EXPECT_EQ(test::shell(bin + " export " + run2 + " --out " + (*dir_ / "none").string() + " --plans 0:0 --gis " + gis.string() +
                        " --geometry " + (state / "units.geojson").string() + " >/dev/null 2>&1"),
            0);
  EXPECT_EQ(read_layer(gis).size(), kDistricts);
}

}  // namespace
}  // namespace planmill
