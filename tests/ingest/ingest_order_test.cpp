// Unit order (docs/ingest.md, "Unit order"), driven through the CLI: units along a Hilbert curve
// of their centroids, the `feature` column mapping each back to the layer, --source-order keeping
// the layer's order. The check of the curve is its defining property (Hilbert, 1891; common
// knowledge): on a 2^k x 2^k grid it visits every cell once, each after a side neighbour.
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdlib>
#include <map>
#include <set>

#include "ingest_support.hpp"
#include "planmill/io/csv.hpp"

namespace planmill::test {
namespace {

namespace fs = std::filesystem;

// An 8 x 8 grid of unit squares "gI_J", written in a scrambled feature order (a fixed stride
// through the 64 cells), so that neither the layer's order nor its reverse is the curve's.
fs::path write_scrambled_grid(const fs::path& path) {
  std::vector<Feature> features;
  for (int k = 0; k < 64; ++k) {
    const int c = (k * 27) % 64, i = c / 8, j = c % 8;  // 27 is prime to 64: every cell once
    features.push_back({"g" + std::to_string(i) + "_" + std::to_string(j), box(i, j, i + 1, j + 1)});
  }
  return write_layer(path, features);
}

std::pair<int, int> cell_of(const std::string& id) {
  const std::size_t bar = id.find('_');
  return {std::stoi(id.substr(1, bar - 1)), std::stoi(id.substr(bar + 1))};
}

std::set<std::pair<std::string, std::string>> pairs_of(const fs::path& out) {
  std::set<std::pair<std::string, std::string>> pairs;
  for (const CsvRow& r : read_csv_file((out / "adjacency.csv").string()).rows) pairs.emplace(std::min(r.fields[0], r.fields[1]), std::max(r.fields[0], r.fields[1]));
  return pairs;
}

TEST(IngestOrder, UnitsFollowAHilbertCurveAndKeepTheirFeatureNumbers) {
  const fs::path dir = scratch_dir("ingest", "order");
  const fs::path layer = write_scrambled_grid(dir / "grid.geojson");
  const std::string out = ingest(layer, dir / "curve", "--planar");
  ASSERT_NE(out.find("ingest: 64 units, 112 adjacencies"), std::string::npos) << out;
  const CsvTable units = read_csv_file((dir / "curve" / "units.csv").string());
  ASSERT_EQ(units.rows.size(), 64u);
  std::set<std::pair<int, int>> seen;
  std::map<std::string, std::size_t> row_of;
  for (std::size_t r = 0; r < units.rows.size(); ++r) {
    const std::string& id = units.rows[r].fields[units.column_index("unit")];
    row_of[id] = r;
    const auto [i, j] = cell_of(id);
    seen.insert({i, j});
    // `feature` is the 1-based feature number in the layer: the scrambled stride's inverse.
    const int feature = std::stoi(units.rows[r].fields[units.column_index("feature")]);
    EXPECT_EQ(((feature - 1) * 27) % 64, i * 8 + j) << id;
    if (r > 0) {
      const auto [pi, pj] = cell_of(units.rows[r - 1].fields[0]);
      EXPECT_EQ(std::abs(i - pi) + std::abs(j - pj), 1) << "rows " << r - 1 << " and " << r << ": " << units.rows[r - 1].fields[0] << ", " << id;
    }
  }
  EXPECT_EQ(seen.size(), 64u);
  // Edges name their ends in unit order, the earlier unit first, and are the same pairs as in
  // the layer's order.
  for (const CsvRow& r : read_csv_file((dir / "curve" / "adjacency.csv").string()).rows) {
    EXPECT_LT(row_of.at(r.fields[0]), row_of.at(r.fields[1])) << r.fields[0] << "," << r.fields[1];
  }
  const std::string kept = ingest(layer, dir / "source", "--planar --source-order");
  ASSERT_NE(kept.find("ingest: 64 units"), std::string::npos) << kept;
  EXPECT_EQ(pairs_of(dir / "curve"), pairs_of(dir / "source"));
  const CsvTable source = read_csv_file((dir / "source" / "units.csv").string());
  for (std::size_t r = 0; r < source.rows.size(); ++r) {
    EXPECT_EQ(source.rows[r].fields[source.column_index("feature")], std::to_string(r + 1));
  }
}

TEST(IngestOrder, AnAttributeNamedFeatureIsRefused) {
  const fs::path dir = scratch_dir("ingest", "order-feature");
  const fs::path layer = write_layer(dir / "l.geojson", {{"a", box(0, 0, 1, 1), ",\"feature\":3"}});
  const std::string out = ingest(layer, dir / "out", "--planar --keep feature");
  EXPECT_NE(out.find("the attribute 'feature' has the name of a column ingest computes"), std::string::npos) << out;
  EXPECT_FALSE(fs::exists(dir / "out" / "units.csv"));
}

}  // namespace
}  // namespace planmill::test
