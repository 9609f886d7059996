// Issue 16 through a real `planmill run`: with an overall-range limit and a county-pieces cap in
// [rules], every recorded plan of a flip run meets both (read back from `export`'s observables,
// whose population.overall_range and splits.county_pieces the numpy reference checks), while the
// same run without them leaves the limits, so the check can fail.
#include <gtest/gtest.h>

#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

struct Extremes {
  double range = 0, pieces = 0;
  std::size_t records = 0;
};

Extremes run_with(const fs::path& dir, const std::string& limits) {
  const fs::path job = test::write_synth_job(dir, "kernel = \"flip\"\nchains = 2\nsteps = 3000\nrecord_every = 10\nseed = 4");
  std::string text = test::read_text(job);
  text.replace(text.find("population_tolerance = 0.05"), 27, "population_tolerance = 0.05\n" + limits);
  std::ofstream(job) << text;
  const std::string bin = PLANMILL_BINARY, run = (dir / "run").string();
  EXPECT_EQ(test::shell(bin + " run " + job.string() + " --output " + run + " --quiet >/dev/null 2>&1"), 0);
  EXPECT_EQ(test::shell(bin + " export " + run + " --out " + (dir / "csv").string() + " >/dev/null 2>&1"), 0);
  std::ifstream in(dir / "csv" / "observables.csv");
  std::string line;
  std::getline(in, line);
  const auto header = test::split_csv_line(line);
  std::size_t range_col = header.size(), pieces_col = header.size();
  for (std::size_t i = 0; i < header.size(); ++i) {
    if (header[i] == "population.overall_range") range_col = i;
    if (header[i] == "splits.county_pieces") pieces_col = i;
  }
  EXPECT_LT(range_col, header.size());
  EXPECT_LT(pieces_col, header.size());
  Extremes e;
  while (std::getline(in, line) && range_col < header.size() && pieces_col < header.size()) {
    const auto cells = test::split_csv_line(line);
    e.range = std::max(e.range, std::stod(cells[range_col]));
    e.pieces = std::max(e.pieces, std::stod(cells[pieces_col]));
    ++e.records;
  }
  return e;
}

TEST(RunLimits, EveryRecordedPlanMeetsTheRangeAndPiecesLimits) {
  const fs::path root = test::scratch_dir("planmill-run-limits", std::to_string(::getpid()));
  const Extremes free = run_with(root / "free", "");
  const Extremes held = run_with(root / "held", "population_range_max = 0.06\ncounty_pieces_max = " +
                                                    std::to_string(static_cast<int>(free.pieces) - 1));
  EXPECT_GT(free.records, 100u);
  EXPECT_EQ(held.records, free.records);
  // Without the limits the chains go beyond them...
  EXPECT_GT(free.range, 0.06);
  // ...with them, no recorded plan does (the range over the ideal; 1e-12 for the division).
  EXPECT_LE(held.range, 0.06 + 1e-12);
  EXPECT_LE(held.pieces, free.pieces - 1);
  fs::remove_all(root);
}

}  // namespace
}  // namespace planmill
