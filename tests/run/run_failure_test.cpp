// How `planmill run` ends when it cannot go on, under real OpenMPI on 2 ranks: a full disk (a real
// tmpfs) and a setting the map outgrows end every rank with one message and a documented exit
// status (5 and 2), never a crash or MPI_Abort; what was committed stays intact and resumable; a
// start that fails leaves nothing that blocks a retry, and a user's file is never overwritten.
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <string>

#include "planmill/run/run_reader.hpp"
#include "../support/run_jobs.hpp"
#include "../support/run_processes.hpp"
#include "../support/small_disk.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using test::read_text;
using test::shell;

fs::path scratch(const std::string& name) { return test::scratch_dir("planmill-failure-test", name); }

std::string run_command(int ranks, const fs::path& job, const fs::path& out, const std::string& extra,
                        const fs::path& log) {
  return test::mpiexec_prefix(ranks) + PLANMILL_BINARY + " run " + job.string() + " --output " +
         out.string() + " --quiet " + extra + " >" + log.string() + " 2>&1";
}

int run(int ranks, const fs::path& job, const fs::path& out, const std::string& extra, const fs::path& log) {
  return shell(run_command(ranks, job, out, extra, log));
}

// Every rank ended on its own: no crash, no abort.
void expect_clean_end(const std::string& log) {
  EXPECT_EQ(log.find("Segmentation"), std::string::npos) << log;
  EXPECT_EQ(log.find("signal"), std::string::npos) << log;
  EXPECT_EQ(log.find("MPI_ABORT"), std::string::npos) << log;
}

void expect_intact(const fs::path& out) {
  RunReader reader(out.string());
  const auto problems = reader.verify();
  EXPECT_TRUE(problems.empty()) << problems.front().what;
}

// The run folder is on a 12 MiB file system (with the measures' observables and sorted vectors
// the whole run no longer fits in 3 MiB); once two checkpoints are in, the disk is filled, so the next
// commit cannot write its plan files.
TEST(RunFailure, AFullDiskEndsEveryRankWithExit5AndTheRunResumesOnceThereIsRoom) {
  test::SmallDisk::release_leftover(
      std::filesystem::temp_directory_path() / "planmill-failure-test-disk" / "disk");
  const auto dir = scratch("disk");
  // Room for the resumed run too: it checkpoints every second, a new plan file per rank (about
  // 40 KB each here), so on a loaded machine it writes more files than on a quiet one.
  test::SmallDisk disk(dir / "disk", 24 << 20);
  if (!disk.available()) GTEST_SKIP() << "cannot mount a tmpfs here (needs root)";
  const auto job = test::write_synth_job(
      dir, "chains = 4\nsteps = 400000\nburn_in = 0\nrecord_every = 100\nseed = 8", 1.0);
  const auto out = disk.path() / "run";
  const pid_t first = test::spawn_shell(run_command(2, job, out, "", dir / "first.log"));
  ASSERT_TRUE(test::wait_for([&] { return test::committed_checkpoints(out) >= 2; }, first, 300))
      << read_text(dir / "first.log");
  disk.fill();
  EXPECT_EQ(test::wait_exit(first), 5) << read_text(dir / "first.log");
  const std::string log = read_text(dir / "first.log");
  EXPECT_NE(log.find("No space left on device"), std::string::npos) << log;
  EXPECT_NE(log.find(out.string()), std::string::npos) << "the message names the file: " << log;
  expect_clean_end(log);
  const RunState stopped = read_run_state(RunLayout{out});
  ASSERT_FALSE(stopped.finished) << "the run ended before the disk filled; make it longer";
  expect_intact(out);

  // Resumed while the disk is still full: the same clean end, nothing lost.
  EXPECT_EQ(run(2, job, out, "--resume", dir / "still_full.log"), 5) << read_text(dir / "still_full.log");
  expect_clean_end(read_text(dir / "still_full.log"));
  EXPECT_EQ(read_run_state(RunLayout{out}).checkpoints, stopped.checkpoints);
  expect_intact(out);

  disk.make_room();
  ASSERT_EQ(run(2, job, out, "--resume", dir / "resumed.log"), 0) << read_text(dir / "resumed.log");
  RunReader reader(out.string());
  EXPECT_TRUE(reader.state().finished);
  for (const auto c : reader.chains()) EXPECT_EQ(reader.record_count(c), 4000U) << "chain " << c;
  expect_intact(out);
}

std::string merge_split_job(const fs::path& dir, std::size_t bound, int seed) {
  return "kernel = \"merge-split\"\nbalanced_cut_bound = " + std::to_string(bound) +
         "\nchains = 2\nsteps = 400000\nrecord_every = 100\nseed = " + std::to_string(seed);
}

// Found by trying: on this map, seed 4's chains draw a tree with 8 balanced edges after about
// 146,000 steps, several checkpoints (1 s apart) into the run.
TEST(RunFailure, ASettingTheMapOutgrowsMidRunEndsEveryRankWithExit2AndKeepsTheCheckpoints) {
  const auto dir = scratch("bound");
  const auto job = test::write_synth_job(dir, merge_split_job(dir, 7, 4), 1.0);
  const auto out = dir / "run";
  EXPECT_EQ(run(2, job, out, "", dir / "first.log"), 2) << read_text(dir / "first.log");
  const std::string log = read_text(dir / "first.log");
  EXPECT_NE(log.find("'sampler.balanced_cut_bound'"), std::string::npos) << log;
  EXPECT_NE(log.find("balanced edges, more than the bound 7"), std::string::npos) << log;
  EXPECT_NE(log.find(job.string()), std::string::npos) << "names the job file: " << log;
  expect_clean_end(log);
  const RunState state = read_run_state(RunLayout{out});
  ASSERT_GE(state.checkpoints, 1U) << "failed before the first checkpoint; the machine is faster "
                                      "than this test expects";
  EXPECT_FALSE(state.finished);
  EXPECT_GT(state.chains[0].records, 0U);
  expect_intact(out);
}

TEST(RunFailure, AStartThatFailsLeavesNothingThatBlocksARetry) {
  const auto dir = scratch("retry");
  // A bound of 1 fails at once, before any checkpoint.
  const auto bad = test::write_synth_job(dir, merge_split_job(dir, 1, 3), 300);
  const auto out = dir / "run";
  EXPECT_EQ(run(2, bad, out, "", dir / "bad.log"), 2) << read_text(dir / "bad.log");
  expect_clean_end(read_text(dir / "bad.log"));
  EXPECT_NE(read_text(dir / "bad.log").find("fresh run may use it"), std::string::npos);

  const auto good = dir / "state" / "good.toml";
  std::string text = read_text(bad);
  text.replace(text.find("balanced_cut_bound = 1"), 22, "balanced_cut_bound = 0");
  text.replace(text.find("steps = 400000"), 14, "steps = 2000");
  std::ofstream(good) << text;
  EXPECT_EQ(run(2, good, out, "", dir / "good.log"), 0) << read_text(dir / "good.log");
  EXPECT_TRUE(read_run_state(RunLayout{out}).finished);
  expect_intact(out);
}

TEST(RunFailure, AFolderHoldingTheUsersFilesIsRefusedAndLeftAsItWas) {
  const auto dir = scratch("user");
  const auto job = test::write_synth_job(dir, "chains = 2\nsteps = 200", 300);
  const std::string before = read_text(job);
  // The job's own folder as the run folder: it holds the user's job.toml and tables.
  EXPECT_EQ(run(1, job, job.parent_path(), "", dir / "here.log"), 2);
  const std::string log = read_text(dir / "here.log");
  EXPECT_NE(log.find("is not empty"), std::string::npos) << log;
  EXPECT_EQ(read_text(job), before);
  EXPECT_FALSE(fs::exists(RunLayout{job.parent_path()}.state_file()));
  EXPECT_FALSE(fs::exists(RunLayout{job.parent_path()}.plans_dir()));
}

}  // namespace
}  // namespace planmill
