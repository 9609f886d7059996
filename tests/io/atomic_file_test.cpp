// Atomic writes: the new content replaces the old in one step, and a failed write leaves the old
// file and no temporary file behind.
#include "planmill/io/atomic_file.hpp"

#include <gtest/gtest.h>

#include <filesystem>

#include "temp_files.hpp"

namespace planmill {
namespace {

std::size_t entries(const std::filesystem::path& folder) {
  std::size_t n = 0;
  for ([[maybe_unused]] const auto& e : std::filesystem::directory_iterator(folder)) ++n;
  return n;
}

TEST(AtomicFile, WritesAndReplaces) {
  test::TempDir dir;
  const std::string path = (dir.path() / "out.txt").string();
  write_file_atomically(path, "first");
  EXPECT_EQ(test::read_file(path), "first");
  write_file_atomically(path, std::string("second\0with nul", 15));
  EXPECT_EQ(test::read_file(path), std::string("second\0with nul", 15));
  write_file_atomically(path, "");
  EXPECT_EQ(test::read_file(path), "");
  EXPECT_EQ(entries(dir.path()), 1U);  // no temporary file left
}

TEST(AtomicFile, MissingFolderIsAnOutputError) {
  test::TempDir dir;
  const std::string path = (dir.path() / "no" / "out.txt").string();
  EXPECT_THROW(write_file_atomically(path, "x"), OutputError);
  EXPECT_EQ(entries(dir.path()), 0U);
}

TEST(AtomicFile, FailedRenameLeavesTheOldEntryAndNoTemporary) {
  test::TempDir dir;
  // A non-empty folder where the file should go: rename(2) refuses to replace it.
  const std::filesystem::path target = dir.path() / "taken";
  std::filesystem::create_directory(target);
  dir.write("taken/keep.txt", "old");
  EXPECT_THROW(write_file_atomically(target.string(), "new"), OutputError);
  EXPECT_TRUE(std::filesystem::is_directory(target));
  EXPECT_EQ(test::read_file((target / "keep.txt").string()), "old");
  EXPECT_EQ(entries(dir.path()), 1U);
}

}  // namespace
}  // namespace planmill
