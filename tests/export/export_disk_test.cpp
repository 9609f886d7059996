// `planmill export` onto a file system that fills up (a real 64 KiB tmpfs): exit 5, one line naming
// the file, and the output folder as it was: no part of the export, no staging folder.
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <string>

#include "../support/run_jobs.hpp"
#include "../support/small_disk.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

TEST(ExportDisk, AFullDiskLeavesTheOutputFolderAsItWas) {
  const fs::path dir = test::scratch_dir("planmill-export-disk", "full");
  test::SmallDisk disk(dir / "disk", 64 * 1024);
  if (!disk.available()) GTEST_SKIP() << "cannot mount a tmpfs here (needs root)";
  const fs::path job = test::write_synth_job(dir, "chains = 2\nsteps = 300\nrecord_every = 1\nseed = 2");
  const fs::path run = dir / "run";
  ASSERT_EQ(test::shell(std::string(PLANMILL_BINARY) + " run " + job.string() + " --output " +
                        run.string() + " --quiet >/dev/null 2>&1"),
            0);
  const fs::path out = disk.path() / "export";
  fs::create_directories(out);
  std::ofstream(out / "notes.txt") << "the analyst's own file\n";
  const fs::path log = dir / "export.log";
  // 600 plans of 200 units as CSV files: about 1 MB, far more than the disk holds.
  EXPECT_EQ(test::shell(std::string(PLANMILL_BINARY) + " export " + run.string() + " --out " +
                        out.string() + " --every 1 >" + log.string() + " 2>&1"),
            5)
      << test::read_text(log);
  const std::string message = test::read_text(log);
  EXPECT_NE(message.find("No space left on device"), std::string::npos) << message;
  EXPECT_NE(message.find(out.string()), std::string::npos) << message;
  std::size_t entries = 0;
  for (const auto& e : fs::directory_iterator(out)) {
    ++entries;
    EXPECT_EQ(e.path().filename(), "notes.txt") << "left behind: " << e.path();
  }
  EXPECT_EQ(entries, 1U);
  EXPECT_EQ(test::read_text(out / "notes.txt"), "the analyst's own file\n");
}

// The plan matrix is built in memory and written whole: on a disk with no room at all, exit 5
// naming plan-matrix.h5, and neither it nor the tallies (written after it) appear in the output folder.
TEST(ExportDisk, AFullDiskStopsThePlanMatrixAndTheTallies) {
  const fs::path dir = test::scratch_dir("planmill-export-disk", "matrix");
  test::SmallDisk disk(dir / "disk", 64 * 1024);
  if (!disk.available()) GTEST_SKIP() << "cannot mount a tmpfs here (needs root)";
  const fs::path job =
      test::write_synth_job(dir, "chains = 2\nsteps = 100\nrecord_every = 1\nseed = 2");
  const fs::path run = dir / "run";
  ASSERT_EQ(test::shell(std::string(PLANMILL_BINARY) + " run " + job.string() + " --output " +
                        run.string() + " --quiet >/dev/null 2>&1"),
            0);
  const fs::path out = disk.path() / "export";
  fs::create_directories(out);
  disk.fill();
  const fs::path log = dir / "export.log";
  EXPECT_EQ(test::shell(std::string(PLANMILL_BINARY) + " export " + run.string() + " --out " +
                        out.string() + " --every 1 --plan-layout matrix --tallies >" +
                        log.string() + " 2>&1"),
            5)
      << test::read_text(log);
  const std::string message = test::read_text(log);
  EXPECT_NE(message.find("No space left on device"), std::string::npos) << message;
  EXPECT_NE(message.find("plan-matrix.h5"), std::string::npos) << message;
  EXPECT_TRUE(fs::is_empty(out)) << "left behind in " << out;
}

}  // namespace
}  // namespace planmill
