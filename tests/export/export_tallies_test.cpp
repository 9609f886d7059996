// planmill export --tallies and --plan-layout matrix, driven as a user would: the long table of
// district tallies, the dense plan matrix, and the old guarantees (checked before writing,
// a damaged chain left out whole).
#include <gtest/gtest.h>
#include <hdf5.h>

#include <algorithm>

#include "export_support.hpp"
#include "planmill/base/error.hpp"
#include "planmill/export/export.hpp"
#include "planmill/export/plan_matrix.hpp"
#include "planmill/io/csv.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using test::ExportFixture;

// The fixture's map as a path u0 - u1 - ... with no lengths: population only, no areas.
void write_path_adjacency(const ExportFixture& f, const fs::path& file) {
  std::string text = "a,b\n";
  for (std::size_t u = 0; u + 1 < f.ids.size(); ++u) {
    text += csv_field(f.ids[u]) + "," + csv_field(f.ids[u + 1]) + "\n";
  }
  std::ofstream(file, std::ios::binary) << text;
}

std::string export_args(const ExportFixture& f, const std::string& rest) {
  return f.run_dir.string() + " --out " + f.out_dir.string() + " " + rest;
}

// The plan matrix as h5 reads it: row-major cells, and the (chain, record) naming each row.
struct Matrix {
  hsize_t rows = 0, units = 0;
  std::vector<std::uint16_t> cells;
  std::vector<std::uint64_t> chain, record;
};

Matrix read_matrix(const fs::path& file) {
  Matrix m;
  const hid_t f = H5Fopen(file.c_str(), H5F_ACC_RDONLY, H5P_DEFAULT);
  EXPECT_GE(f, 0) << file;
  const hid_t d = H5Dopen2(f, "plans", H5P_DEFAULT);
  const hid_t space = H5Dget_space(d);
  hsize_t dims[2] = {0, 0};
  H5Sget_simple_extent_dims(space, dims, nullptr);
  m.rows = dims[0];
  m.units = dims[1];
  m.cells.resize(m.rows * m.units);
  if (!m.cells.empty())
    H5Dread(d, H5T_NATIVE_UINT16, H5S_ALL, H5S_ALL, H5P_DEFAULT, m.cells.data());
  for (auto [name, out] : {std::pair{"chain", &m.chain}, std::pair{"record", &m.record}}) {
    const hid_t c = H5Dopen2(f, name, H5P_DEFAULT);
    out->resize(m.rows);
    if (m.rows > 0) H5Dread(c, H5T_NATIVE_UINT64, H5S_ALL, H5S_ALL, H5P_DEFAULT, out->data());
    H5Dclose(c);
  }
  H5Sclose(space);
  H5Dclose(d);
  H5Fclose(f);
  return m;
}

TEST(ExportLayout, ListsOfFormsParse) {
  EXPECT_EQ(parse_plan_layout("files", "--plan-layout"), (PlanLayout{}));
  EXPECT_EQ(parse_plan_layout("both", "--plan-layout"), (PlanLayout{.files = true, .wide = true}));
  EXPECT_EQ(parse_plan_layout("matrix,wide", "--plan-layout"),
            (PlanLayout{.files = false, .wide = true, .matrix = true}));
  EXPECT_EQ(parse_plan_layout("none", "--plan-layout"), (PlanLayout{.files = false}));
  for (const char* bad : {"", "cube", "none,files", "files,,wide", "Matrix"}) {
    EXPECT_THROW((void)parse_plan_layout(bad, "--plan-layout"), InputError) << bad;
  }
}

TEST(ExportTallies, EachDistrictsPopulationIsTheSumOfItsUnitsAndAreaAndPerimeterAreNA) {
  ExportFixture f;  // 3 chains x 40 records, 30 units of population 100 + u, 3 districts
  write_path_adjacency(f, f.dir.path() / "map" / "adjacency.csv");
  ASSERT_EQ(test::run_export(export_args(f, "--plans 0:3,2:10 --tallies --plan-layout none")), 0);
  EXPECT_FALSE(fs::exists(f.out_dir / "plans"));
  EXPECT_TRUE(fs::exists(f.out_dir / observables_file_name()));
  const CsvTable table = read_csv_file((f.out_dir / tallies_file_name()).string());
  EXPECT_EQ(table.header, (std::vector<std::string>{"chain", "record", "step", "district",
                                                    "population", "area", "perimeter"}));
  ASSERT_EQ(table.rows.size(), 6U);
  const CsvTable observables = read_csv_file((f.out_dir / observables_file_name()).string());
  for (std::size_t i = 0; i < table.rows.size(); ++i) {
    const auto& row = table.rows[i].fields;
    const RecordRef ref{std::stoull(row[0]), std::stoull(row[1])};
    EXPECT_EQ(ref, (i < 3 ? RecordRef{0, 3} : RecordRef{2, 10}));
    const std::size_t district = std::stoull(row[3]);
    EXPECT_EQ(district, i % 3 + 1);
    std::int64_t population = 0;
    const auto& plan = f.run.plans.at(ref.chain).at(ref.record);
    for (std::size_t u = 0; u < plan.size(); ++u) {
      if (plan[u] + 1U == district) population += 100 + static_cast<std::int64_t>(u);
    }
    EXPECT_EQ(row[4], std::to_string(population)) << "row " << i;
    EXPECT_EQ(row[5], "NA");
    EXPECT_EQ(row[6], "NA");
    const auto match = std::find_if(observables.rows.begin(), observables.rows.end(), [&](auto& r) {
      return r.fields[0] == row[0] && r.fields[1] == row[1];
    });
    ASSERT_NE(match, observables.rows.end());
    EXPECT_EQ(row[2], match->fields[2]);  // the record's step
  }
}

TEST(ExportTallies, AMissingAdjacencyFileIsNamedAndNothingIsWritten) {
  ExportFixture f;  // its job names ../map/adjacency.csv, which is not there
  std::string errors;
  EXPECT_EQ(test::run_export(export_args(f, "--every 10 --tallies"), &errors), 2);
  EXPECT_NE(errors.find("map.adjacency"), std::string::npos) << errors;
  EXPECT_NE(errors.find("--map-adjacency"), std::string::npos) << errors;
  EXPECT_EQ(std::count(errors.begin(), errors.end(), '\n'), 1) << errors;
  EXPECT_FALSE(fs::exists(f.out_dir));
  const fs::path elsewhere = f.dir.path() / "edges.csv";
  EXPECT_EQ(
      test::run_export(export_args(f, "--every 10 --tallies --map-adjacency " + elsewhere.string()),
                       &errors),
      2);
  EXPECT_NE(
      errors.find(elsewhere.string() + ": '--map-adjacency': the adjacency file is not there"),
      std::string::npos)
      << errors;
  EXPECT_FALSE(fs::exists(f.out_dir));
  write_path_adjacency(f, elsewhere);
  EXPECT_EQ(test::run_export(
                export_args(f, "--every 10 --tallies --map-adjacency " + elsewhere.string())),
            0);
  EXPECT_EQ(read_csv_file((f.out_dir / tallies_file_name()).string()).rows.size(), 3U * 4U * 3U);
  EXPECT_TRUE(fs::exists(f.out_dir / plan_file_name({2, 30})));  // files stay the default
}

TEST(ExportTallies, TalliesOrAMatrixWithNoPlansChosenAndBadLayoutsWriteNothing) {
  ExportFixture f;
  write_path_adjacency(f, f.dir.path() / "map" / "adjacency.csv");
  for (const char* args : {"--tallies", "--plan-layout matrix", "--every 5 --plan-layout cube",
                           "--every 5 --plan-layout none,matrix"}) {
    std::string errors;
    EXPECT_EQ(test::run_export(export_args(f, args), &errors), 2) << args;
    EXPECT_EQ(std::count(errors.begin(), errors.end(), '\n'), 1) << args << ": " << errors;
    EXPECT_FALSE(fs::exists(f.out_dir)) << args;
  }
  std::string errors;
  (void)test::run_export(export_args(f, "--tallies"), &errors);
  EXPECT_NE(errors.find("choose plans with --plans, --every or --chains"), std::string::npos)
      << errors;
}

TEST(ExportMatrix, RowsAreTheChosenPlansInOrderBesideTheWideTable) {
  ExportFixture f;
  ASSERT_EQ(test::run_export(export_args(f, "--every 10 --plans 1:39 --plan-layout matrix,wide")),
            0);
  EXPECT_FALSE(fs::exists(f.out_dir / "plans"));
  EXPECT_TRUE(fs::exists(f.out_dir / wide_file_name()));
  const Matrix m = read_matrix(f.out_dir / matrix_file_name());
  ASSERT_EQ(m.rows, 13U);  // 3 chains x records 0, 10, 20, 30, and 1:39
  ASSERT_EQ(m.units, f.ids.size());
  std::vector<RecordRef> rows;
  for (hsize_t i = 0; i < m.rows; ++i) {
    rows.push_back({m.chain[i], m.record[i]});
    const auto& plan = f.run.plans.at(m.chain[i]).at(m.record[i]);
    for (hsize_t u = 0; u < m.units; ++u) {
      ASSERT_EQ(m.cells[i * m.units + u], plan[u] + 1U) << "row " << i << ", unit " << u;
    }
  }
  EXPECT_TRUE(std::is_sorted(rows.begin(), rows.end()));
  EXPECT_EQ(rows[7], (RecordRef{1, 30}));
  EXPECT_EQ(rows[8], (RecordRef{1, 39}));
}

TEST(ExportMatrix, ADamagedChainIsLeftOutOfTheMatrixAndTheTallies) {
  ExportFixture f;  // chains 0 and 2 on rank 0, chain 1 on rank 1; 20 records per segment
  write_path_adjacency(f, f.dir.path() / "map" / "adjacency.csv");
  f.dir.write("run/" + RunLayout::plan_file_name(1, 1), std::string(4096, 'x'));
  std::string errors;
  EXPECT_EQ(test::run_export(export_args(f, "--every 10 --plan-layout matrix --tallies"), &errors),
            3);
  EXPECT_NE(errors.find("chain 1, records 20-39"), std::string::npos) << errors;
  const Matrix m = read_matrix(f.out_dir / matrix_file_name());
  EXPECT_EQ(m.rows, 8U);
  EXPECT_EQ(std::count(m.chain.begin(), m.chain.end(), 1U), 0);
  const CsvTable tallies = read_csv_file((f.out_dir / tallies_file_name()).string());
  EXPECT_EQ(tallies.rows.size(), 8U * 3U);
  for (const auto& row : tallies.rows) EXPECT_NE(row.fields[0], "1");
}

// Rows dropped after a chain fails part-way, across a chunk boundary: later rows take their place.
TEST(ExportMatrix, DroppedRowsAreOverwrittenByTheNextChain) {
  test::TempDir dir;
  const fs::path file = dir.path() / "m.h5";
  const std::size_t units = 300000;  // 3 rows per 1 MiB chunk
  ASSERT_EQ(PlanMatrixWriter::chunk_rows(units, 1), 3U);
  PlanMatrixHeader header;
  for (std::size_t u = 0; u < units; ++u) header.unit_ids.push_back("u" + std::to_string(u));
  header.district_count = 9;
  PlanMatrixWriter writer(file.string(), header);
  std::vector<DistrictIndex> labels(units);
  const auto add = [&](std::uint64_t chain, std::uint64_t record) {
    std::fill(labels.begin(), labels.end(), static_cast<DistrictIndex>(chain * 3 + record));
    writer.add(chain, record, 10 * record, labels);
  };
  for (std::uint64_t r = 0; r < 2; ++r) add(0, r);
  for (std::uint64_t r = 0; r < 3; ++r) add(1, r);  // rows 2..4: a chunk written, one pending
  writer.drop_rows_from(2);
  for (std::uint64_t r = 0; r < 2; ++r) add(2, r);
  writer.close();
  const Matrix m = read_matrix(file);
  ASSERT_EQ(m.rows, 4U);
  EXPECT_EQ(m.chain, (std::vector<std::uint64_t>{0, 0, 2, 2}));
  for (hsize_t i = 0; i < m.rows; ++i) {
    const auto want = static_cast<std::uint16_t>(m.chain[i] * 3 + m.record[i] + 1);
    EXPECT_EQ(std::count(m.cells.begin() + i * units, m.cells.begin() + (i + 1) * units, want),
              static_cast<std::ptrdiff_t>(units))
        << "row " << i;
  }
}

}  // namespace
}  // namespace planmill
