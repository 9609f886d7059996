// planmill ingest driven as a user would: hand-built layers whose answers are worked out by hand
// (unit squares: areas, perimeters and shared lengths are whole numbers), and every fault.
#include <gtest/gtest.h>

#include <algorithm>

#include "ingest_support.hpp"
#include "planmill/io/csv.hpp"

namespace planmill::test {
namespace {

namespace fs = std::filesystem;

// A 2 x 2 block of unit squares a b / c d (a at the top left).
std::vector<Feature> block() {
  return {{"a", box(0, 1, 1, 2), ",\"pop\":5"}, {"b", box(1, 1, 2, 2), ",\"pop\":6"},
          {"c", box(0, 0, 1, 1), ",\"pop\":7"}, {"d", box(1, 0, 2, 1), ",\"pop\":0"}};
}

TEST(IngestCli, RookLeavesCornerPairsOutQueenKeepsThem) {
  const fs::path dir = scratch_dir("ingest", "corner");
  const fs::path layer = write_layer(dir / "block.geojson", block());
  // In the layer's order, so that the tables read as written by hand (ingest_order_test.cpp
  // checks the default order).
  const std::string rook = ingest(layer, dir / "rook", "--planar --source-order --population pop");
  ASSERT_NE(rook.find("4 adjacencies (rook)"), std::string::npos) << rook;
  // By hand: the four sides of length 1; a-d and b-c meet at the centre point only.
  EXPECT_EQ(read_text(dir / "rook" / "adjacency.csv"), "a,b,length\na,b,1\na,c,1\nb,d,1\nc,d,1\n");
  // Each square: area 1, perimeter 4, two sides on the block's outline.
  EXPECT_EQ(read_text(dir / "rook" / "units.csv"),
            "unit,pop,area,perimeter,outer,feature\na,5,1,4,2,1\nb,6,1,4,2,2\nc,7,1,4,2,3\nd,0,1,4,2,4\n");
  EXPECT_NE(rook.find("1 unit(s) have population 0: 'd'"), std::string::npos) << rook;
  const std::string job = read_text(dir / "rook" / "job.toml");
  EXPECT_NE(job.find("population = \"pop\""), std::string::npos) << job;
  EXPECT_NE(job.find("outer_boundary = \"outer\""), std::string::npos) << job;
  // With the district count filled in, the skeleton passes `planmill check` (the files' formats
  // are the ones the loader reads).
  const std::size_t count = job.find("# count = 2");
  ASSERT_NE(count, std::string::npos) << job;
  std::ofstream(dir / "rook" / "job.toml") << job.substr(0, count) << "count = 2\n" << job.substr(job.find('\n', count) + 1);
  const std::string check = command_output(std::string(PLANMILL_BINARY) + " check " + (dir / "rook" / "job.toml").string() + " 2>&1");
  EXPECT_EQ(check.find("failed"), std::string::npos) << check;

  const std::string queen = ingest(layer, dir / "queen", "--planar --queen --source-order");
  ASSERT_NE(queen.find("6 adjacencies (queen)"), std::string::npos) << queen;
  EXPECT_EQ(read_text(dir / "queen" / "adjacency.csv"),
            "a,b,length\na,b,1\na,c,1\na,d,0\nb,c,0\nb,d,1\nc,d,1\n");
}

TEST(IngestCli, PlanarCoordinatesInAGeoJsonNeedPlanar) {
  // RFC 7946: GeoJSON without a crs member is longitude/latitude on WGS 84.
  const fs::path dir = scratch_dir("ingest", "lonlat");
  std::vector<Feature> far = block();
  far[0].geometry = box(500, 1, 501, 2);
  const std::string out = ingest(write_layer(dir / "far.geojson", far), dir / "out", "");
  EXPECT_NE(out.find("failed (512)"), std::string::npos) << out;  // exit status 2
  EXPECT_NE(out.find("unit 'a' (feature 1) has coordinates outside longitude/latitude"), std::string::npos) << out;
  EXPECT_NE(out.find("pass --planar"), std::string::npos) << out;
}

void expect_fault(const std::vector<Feature>& features, const std::string& args, const std::string& message) {
  const fs::path dir = scratch_dir("ingest", "fault");
  const std::string out = ingest(write_layer(dir / "layer.geojson", features), dir / "out", "--planar " + args);
  EXPECT_NE(out.find("failed (512)"), std::string::npos) << out;
  EXPECT_NE(out.find(message), std::string::npos) << out;
  EXPECT_EQ(std::count(out.begin(), out.end(), '\n'), 1) << out;  // one line
  // Nothing half-written: the output folder holds no file, and no staging folder is left.
  EXPECT_TRUE(!fs::exists(dir / "out") || fs::is_empty(dir / "out")) << out;
}

TEST(IngestCli, FaultsNameTheUnitAndWriteNothing) {
  std::vector<Feature> f = block();
  f[2].id = "a";
  expect_fault(f, "", "unit 'a' appears twice (features 1 and 3); make the ids unique");
  f = block();
  f[1].geometry = "null";
  expect_fault(f, "", "unit 'b' (feature 2) has an empty geometry; draw its polygon");
  f[1].geometry = "{\"type\":\"Polygon\",\"coordinates\":[]}";
  expect_fault(f, "", "unit 'b' (feature 2) has an empty geometry");
  f[1].geometry = "{\"type\":\"LineString\",\"coordinates\":[[1,1],[2,2]]}";
  expect_fault(f, "", "unit 'b' (feature 2) is a Line String, not a polygon");
  f = block();
  f[3].extra = ",\"pop\":\"many\"";
  expect_fault(f, "--population pop", "unit 'd' (feature 4) has population 'many', not a number");
  expect_fault(block(), "--keep votes", "no attribute 'votes' in the layer (attributes: 'unit', 'pop')");
  expect_fault(block(), "--county shire", "'--county': no attribute 'shire'");
  {
    const fs::path dir = scratch_dir("ingest", "unreadable");
    std::ofstream(dir / "not-a-map.geojson") << "this is not GeoJSON";
    const std::string out = ingest(dir / "not-a-map.geojson", dir / "out", "");
    EXPECT_NE(out.find("not-a-map.geojson: GDAL cannot open it as a vector map"), std::string::npos) << out;
    EXPECT_FALSE(fs::exists(dir / "out"));
  }
  // An island far from the block: its size and population are listed.
  f = block();
  f.push_back({"e", box(5, 5, 6, 6), ",\"pop\":9"});
  expect_fault(f, "--population pop",
               "the map falls into 2 separate parts; besides the largest (4 units): 1 unit(s), population 9, e.g. 'e'; list the links");
}

TEST(IngestCli, IslandsAreJoinedByBridgesOrToTheirNearestUnit) {
  const fs::path dir = scratch_dir("ingest", "island");
  std::vector<Feature> f = block();
  f.push_back({"e", box(3, 0.5, 4, 1.5), ",\"pop\":9"});  // 1 from b and d, further from a and c
  const fs::path layer = write_layer(dir / "island.geojson", f);
  const std::string joined = ingest(layer, dir / "joined", "--planar --join-islands");
  EXPECT_NE(joined.find("joined a separate part of 1 unit(s) at 'e' to its nearest unit 'b' (1 map units apart)"), std::string::npos)
      << joined;
  EXPECT_NE(read_text(dir / "joined" / "adjacency.csv").find("\nb,e,0\n"), std::string::npos);
  std::ofstream(dir / "bridges.csv") << "from,to\nc,e\n";
  const std::string bridged = ingest(layer, dir / "bridged", "--planar --bridges " + (dir / "bridges.csv").string());
  EXPECT_NE(bridged.find("5 adjacencies"), std::string::npos) << bridged;
  EXPECT_NE(read_text(dir / "bridged" / "adjacency.csv").find("\nc,e,0\n"), std::string::npos);
  std::ofstream(dir / "bad.csv") << "from,to\nc,zz\n";
  const std::string bad = ingest(layer, dir / "bad", "--planar --bridges " + (dir / "bad.csv").string());
  EXPECT_NE(bad.find("bad.csv:2: 'to': unit 'zz' is not in the map"), std::string::npos) << bad;
}

TEST(IngestCli, BowTieIsRepairedAndSaid) {
  // The bow tie (0,0)-(2,2)-(2,0)-(0,2) crosses itself at (1,1): make-valid gives two triangles of
  // area 1 each (by hand); the square to its right shares the side x = 2, 0..2.
  const fs::path dir = scratch_dir("ingest", "bowtie");
  const std::vector<Feature> f = {
      {"t", "{\"type\":\"Polygon\",\"coordinates\":[[[0,0],[2,2],[2,0],[0,2],[0,0]]]}"}, {"s", box(2, 0, 3, 2)}};
  const std::string out = ingest(write_layer(dir / "bowtie.geojson", f), dir / "out", "--planar");
  EXPECT_NE(out.find("unit 't' (feature 1): invalid polygon (self-crossing or folded ring) repaired by make-valid"), std::string::npos) << out;
  EXPECT_NE(out.find("1 unit(s) are made of several separate pieces (first: 't')"), std::string::npos) << out;
  // Perimeter by hand: 4 legs of sqrt(2) and two sides of 2.
  const std::string units = read_text(dir / "out" / "units.csv");
  EXPECT_NE(units.find("t,2,"), std::string::npos) << units;
  EXPECT_EQ(read_text(dir / "out" / "adjacency.csv"), "a,b,length\nt,s,2\n");
}

TEST(IngestCli, SnapJoinsUnitsAcrossASmallGap) {
  // Two squares 0.01 apart: no neighbours without a tolerance (the map then falls apart), joined
  // with --snap 0.05 and said.
  const fs::path dir = scratch_dir("ingest", "snap");
  const fs::path layer = write_layer(dir / "gap.geojson", {{"a", box(0, 0, 1, 1)}, {"b", box(1.01, 0, 2, 1)}});
  EXPECT_NE(ingest(layer, dir / "plain", "--planar").find("2 separate parts"), std::string::npos);
  const std::string out = ingest(layer, dir / "snapped", "--planar --snap 0.05");
  EXPECT_NE(out.find("1 pair(s) joined only by the snapping tolerance 0.050000: a-b"), std::string::npos) << out;
}

TEST(IngestCli, ProjectedCrsMeasuresPlanarInItsOwnUnit) {
  // A 3 x 4 rectangle: area 12, perimeter 14 in the CRS's unit, whatever the unit is.
  const fs::path dir = scratch_dir("ingest", "projected");
  for (const auto& [code, unit] : {std::pair{"32633", "metre"}, std::pair{"2263", "US survey foot"}}) {
    const std::string crs = std::string("\"crs\":{\"type\":\"name\",\"properties\":{\"name\":\"urn:ogc:def:crs:EPSG::") + code + "\"}},";
    const fs::path layer = write_layer(dir / (std::string(code) + ".geojson"), {{"a", box(0, 0, 3, 4)}}, crs);
    const std::string out = ingest(layer, dir / code, "");
    EXPECT_NE(out.find(std::string("measured planar, lengths in ") + unit + ", areas in square " + unit), std::string::npos) << out;
    EXPECT_EQ(read_text(dir / code / "units.csv"), "unit,area,perimeter,outer,feature\na,12,14,14,1\n");
  }
}

TEST(IngestCli, OverlapsAreReported) {
  // b overlaps a by the strip 0.9..1 x 0..1 (area 0.1 by hand).
  const fs::path dir = scratch_dir("ingest", "overlap");
  const fs::path layer = write_layer(dir / "overlap.geojson", {{"a", box(0, 0, 1, 1), ",\"share\":0.30000000000000004"}, {"b", box(0.9, 0, 2, 1), ",\"share\":0.5"}, {"c", box(2, 0, 3, 1), ",\"share\":1"}});
  const std::string out = ingest(layer, dir / "out", "--planar --keep share");
  // A real attribute keeps every digit of its double (GDAL's own text would give 0.3).
  EXPECT_NE(read_text(dir / "out" / "units.csv").find("\na,0.30000000000000004,1,"), std::string::npos) << read_text(dir / "out" / "units.csv");
  EXPECT_NE(out.find("1 pair(s) overlap, their areas counting the overlap twice: a-b (area 0.100000)"), std::string::npos) << out;
}

// Issue item 5: synth's own GeoJSON read back gives synth's own tables. Corners lie on a 1/128 km
// lattice, so every area and length is an exact binary fraction and must agree exactly.
TEST(IngestCli, SynthStateReadBackEqualsSynthTables) {
  const fs::path dir = scratch_dir("ingest", "synth");
  ASSERT_EQ(shell(std::string(PLANMILL_BINARY) + " synth --units 400 --districts 4 --seed 11 --out " + (dir / "state").string() +
                  " >/dev/null"),
            0);
  const std::string out = ingest(dir / "state" / "units.geojson", dir / "read", "--planar --source-order --county county --municipality town");
  ASSERT_NE(out.find("ingest: 400 units"), std::string::npos) << out;
  const CsvTable theirs = read_csv_file((dir / "state" / "units.csv").string());
  const CsvTable ours = read_csv_file((dir / "read" / "units.csv").string());
  ASSERT_EQ(ours.rows.size(), theirs.rows.size());
  for (std::size_t r = 0; r < ours.rows.size(); ++r) {
    for (const char* column : {"unit", "county", "town", "area", "perimeter", "outer"}) {
      EXPECT_EQ(ours.rows[r].fields[ours.column_index(column)], theirs.rows[r].fields[theirs.column_index(column)])
          << "row " << r << " column " << column;
    }
  }
  EXPECT_EQ(read_text(dir / "read" / "adjacency.csv"), read_text(dir / "state" / "adjacency.csv"));
  // The skeleton names the kept roles; `planmill check` wants only what the user must fill in.
  const std::string job = read_text(dir / "read" / "job.toml");
  EXPECT_NE(job.find("county = \"county\"\nmunicipality = \"town\""), std::string::npos) << job;
}

}  // namespace
}  // namespace planmill::test
