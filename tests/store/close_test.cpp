// EnsembleWriter::close(): the file appears only when it is whole, and a write that fails (a real
// full file system) is reported, naming the file, with nothing half-written left behind.
#include <gtest/gtest.h>
#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <string>

#include "planmill/base/error.hpp"
#include "planmill/store/ensemble.hpp"
#include "../support/small_disk.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

fs::path scratch(const std::string& name) {
  const fs::path dir =
      fs::temp_directory_path() / ("planmill_close_" + std::to_string(getpid()) + "_" + name);
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

// `records` plans of `units` units that differ from record to record, so that they take room.
void record_plans(EnsembleWriter& writer, std::size_t units, std::size_t records) {
  const std::size_t h = writer.add_chain(0, {"x"});
  std::vector<DistrictIndex> plan(units);
  std::uint64_t state = 12345;
  for (std::size_t r = 0; r < records; ++r) {
    for (auto& d : plan) {
      state = state * 6364136223846793005ULL + 1442695040888963407ULL;
      d = static_cast<DistrictIndex>(state >> 62);
    }
    const double x = static_cast<double>(r);
    writer.record(h, r, plan, {&x, 1});
  }
}

std::size_t entries(const fs::path& dir) {
  std::size_t n = 0;
  for ([[maybe_unused]] const auto& e : fs::directory_iterator(dir)) ++n;
  return n;
}

TEST(EnsembleClose, NoFileUntilCloseAndNoneWithoutIt) {
  const fs::path dir = scratch("until");
  const fs::path path = dir / "seg.h5";
  {
    EnsembleWriter writer(path.string(), {100, 4, "job"});
    record_plans(writer, 100, 50);
    EXPECT_FALSE(fs::exists(path));
  }
  EXPECT_EQ(entries(dir), 0U);  // dropped unclosed: nothing written
  {
    EnsembleWriter writer(path.string(), {100, 4, "job"});
    record_plans(writer, 100, 50);
    writer.close();
    EXPECT_THROW(writer.close(), std::logic_error);
  }
  EnsembleReader reader(path.string());
  EXPECT_EQ(reader.record_count(0), 50U);
  EXPECT_TRUE(reader.verify().empty());
  fs::remove_all(dir);
}

TEST(EnsembleClose, AMissingFolderIsRefusedAtOnce) {
  const fs::path dir = scratch("missing");
  const std::string path = (dir / "no" / "seg.h5").string();
  try {
    EnsembleWriter writer(path, {10, 2, ""});
    FAIL() << "accepted a file in a missing folder";
  } catch (const OutputError& e) {
    EXPECT_NE(std::string(e.what()).find(path), std::string::npos) << e.what();
  }
  fs::remove_all(dir);
}

// The file system is a 256 KiB tmpfs; the plans take about 0.5 MB (2 bits a unit).
TEST(EnsembleClose, AFullDiskAtCloseNamesTheFileAndLeavesTheOldOneWhole) {
  const fs::path dir = scratch("full");
  test::SmallDisk disk(dir / "disk", 256 * 1024);
  if (!disk.available()) GTEST_SKIP() << "cannot mount a tmpfs here (needs root)";
  const fs::path path = disk.path() / "seg.h5";
  std::ofstream(path) << "the file that was there";
  EnsembleWriter writer(path.string(), {1000, 4, "job"});
  record_plans(writer, 1000, 2000);
  try {
    writer.close();
    FAIL() << "a 2000-plan file fit on a 256 KiB disk";
  } catch (const OutputError& e) {
    const std::string what = e.what();
    EXPECT_NE(what.find(path.string()), std::string::npos) << what;
    EXPECT_NE(what.find("No space left"), std::string::npos) << what;
  }
  std::ifstream in(path);
  std::string old;
  std::getline(in, old);
  EXPECT_EQ(old, "the file that was there");
  EXPECT_EQ(entries(disk.path()), 1U);  // no temporary file left
}

}  // namespace
}  // namespace planmill
