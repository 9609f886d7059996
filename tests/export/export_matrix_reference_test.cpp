// Reference check of the plan matrix and the district tallies against h5py + numpy (Debian
// python3-h5py, python3-numpy, via /usr/bin/python3): tests/export/matrix_tallies_check.py reads
// the matrix with h5py alone (HDF5's own shuffle and deflate filters, no planmill code), compares
// each row with an independent decode of the run's plan files, and recomputes every district
// tally from the unit table and the adjacency file.
#include <gtest/gtest.h>

#include <cstdio>

#include "export_support.hpp"
#include "planmill/export/export.hpp"
#include "planmill/io/csv.hpp"
#include "command_output.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

// Runs the check; returns what it printed, or "failed (STATUS): ..." with its message.
std::string matrix_check(const fs::path& run_dir, const fs::path& out_dir, const fs::path& job,
                         std::uint64_t rung = 0, const std::string& map_files = "") {
  const std::string command = "PYTHONPATH=" PLANMILL_SOURCE_DIR
                              "/tests/support /usr/bin/python3 " PLANMILL_SOURCE_DIR
                              "/tests/export/matrix_tallies_check.py " +
                              run_dir.string() + " " + out_dir.string() + " " + job.string() + " " +
                              std::to_string(rung) + " " + map_files + " 2>&1";
  return test::command_output(command);
}

// Adds `extra` (times the row number) to the number in `column` of every row of a CSV file.
void shift_column(const fs::path& file, std::size_t column, double extra) {
  const CsvTable table = read_csv_file(file.string());
  std::string text;
  for (const std::string& name : table.header) text += (text.empty() ? "" : ",") + csv_field(name);
  text += '\n';
  for (std::size_t r = 0; r < table.rows.size(); ++r) {
    std::vector<std::string> fields = table.rows[r].fields;
    fields[column] = csv_number(std::stod(fields[column]) + extra * static_cast<double>(r + 1));
    for (std::size_t i = 0; i < fields.size(); ++i) text += (i ? "," : "") + csv_field(fields[i]);
    text += '\n';
  }
  std::ofstream(file, std::ios::binary) << text;
}

// A real run on a `planmill synth` state (areas, outer boundaries, shared lengths, a group and two
// elections): 2 chains x 70 records, every third chosen, 4 districts. Synth's lengths are
// multiples of 1/4 km, whose sums are exact in any order; shifted by multiples of 0.1 (not exact
// in binary) after the run, sums in another order would differ in the last bits.
TEST(ExportMatrixH5py, MatrixAndTalliesOfARealRunMatchAnIndependentRecount) {
  test::TempDir dir;
  const test::RealRun run = test::write_real_run(dir.path());
  const fs::path state = run.job.parent_path();
  shift_column(state / "units.csv", 4, 0.1);        // area
  shift_column(state / "units.csv", 6, 0.01);       // outer
  shift_column(state / "adjacency.csv", 2, 0.001);  // shared length
  const fs::path out = dir.path() / "out";
  std::string errors;
  ASSERT_EQ(test::run_export(run.run_dir.string() + " --out " + out.string() +
                                 " --every 3 --plan-layout matrix --tallies",
                             &errors),
            0)
      << errors;
  EXPECT_NE(errors.find("unit table " + (state / "units.csv").string() + " differs"),
            std::string::npos)
      << errors;
  EXPECT_NE(errors.find("adjacency file " + (state / "adjacency.csv").string() + " differs"),
            std::string::npos)
      << errors;
  EXPECT_FALSE(fs::exists(out / "plans"));
  EXPECT_EQ(matrix_check(run.run_dir, out, run.job), "matrix 48\ntallies 192\n");

  // The check must catch one changed tally, and a changed cell of the matrix.
  const fs::path tallies = out / tallies_file_name();
  std::string text = test::read_file(tallies.string());
  const std::size_t row = text.find('\n', text.find('\n') + 1) + 1;  // the second data row
  const std::size_t area = text.rfind(',', text.find('\n', row) - 1) - 1;
  text[area] = text[area] == '1' ? '2' : '1';  // last digit of its area
  std::ofstream(tallies, std::ios::binary) << text;
  EXPECT_NE(matrix_check(run.run_dir, out, run.job).find("mismatch: area of row 2"),
            std::string::npos);
}

// Three hundred districts: uint16 cells. The fixture has no adjacency file, so matrix only.
TEST(ExportMatrixH5py, TwoByteCellsAndAHotRung) {
  test::ExportFixture f(test::kThreeHundredDistricts);
  ASSERT_EQ(test::run_export(f.run_dir.string() + " --out " + f.out_dir.string() +
                             " --chains 1 --every 7 --plans 0:59,0:0 --plan-layout matrix"),
            0);
  const fs::path job = f.dir.path() / "job" / "job.toml";
  EXPECT_EQ(matrix_check(f.run_dir, f.out_dir, job), "matrix 11\n");

  test::ExportFixture hot(test::kThreeRecordedRungs);
  ASSERT_EQ(test::run_export(hot.run_dir.string() + " --out " + hot.out_dir.string() +
                             " --rung 2 --every 4 --plan-layout matrix"),
            0);
  const fs::path hot_job = hot.dir.path() / "job" / "job.toml";
  EXPECT_EQ(matrix_check(hot.run_dir, hot.out_dir, hot_job, 2), "matrix 24\n");
  // Rung 2's matrix read as rung 1's: a mismatch, not a pass.
  fs::rename(hot.out_dir / matrix_file_name(2), hot.out_dir / matrix_file_name(1));
  EXPECT_NE(matrix_check(hot.run_dir, hot.out_dir, hot_job, 1).find("mismatch"), std::string::npos);
}

}  // namespace
}  // namespace planmill
