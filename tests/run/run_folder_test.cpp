// The run folder as a user meets it: one run per folder at a time (run.lock), and a fresh run that
// overwrites nothing of the user's and leaves nothing that blocks a retry. Real `planmill run`
// processes under mpiexec on real files.
#include <gtest/gtest.h>
#include <signal.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <functional>
#include <string>
#include <thread>

#include "planmill/run/run_reader.hpp"
#include "../support/run_jobs.hpp"
#include "../support/run_processes.hpp"


namespace planmill {
namespace {

namespace fs = std::filesystem;

fs::path scratch(const std::string& name) { return test::scratch_dir("planmill-folder-test", name); }
using test::shell;
fs::path write_job(const fs::path& dir, const std::string& sampler, double checkpoint_seconds = 300) {
  return test::write_synth_job(dir, sampler, checkpoint_seconds);
}

std::string command_line(int ranks, const fs::path& job, const fs::path& out, const std::string& extra,
                         const fs::path& log) {
  return test::mpiexec_prefix(ranks) + PLANMILL_BINARY + " run " +
         job.string() + " --output " + out.string() + " --quiet " + extra + " >" + log.string() + " 2>&1";
}

int run(int ranks, const fs::path& job, const fs::path& out, const std::string& extra, const fs::path& log) {
  return shell(command_line(ranks, job, out, extra, log));
}

pid_t spawn(int ranks, const fs::path& job, const fs::path& out, const std::string& extra, const fs::path& log) {
  return test::spawn_shell(command_line(ranks, job, out, extra, log));
}

using test::committed_checkpoints;
using test::still_running;
using test::wait_exit;
using test::wait_for;
using test::read_text;

// The folder is intact and complete: every chain has the records its steps call for.
void expect_intact_finished_run(const fs::path& out, std::uint64_t records_per_chain) {
  RunReader reader(out.string());
  EXPECT_TRUE(reader.state().finished);
  EXPECT_TRUE(reader.verify().empty()) << reader.verify().front().what;
  for (const auto c : reader.chains()) EXPECT_EQ(reader.record_count(c), records_per_chain) << "chain " << c;
}

TEST(RunFolder, ASecondRunOrResumeIsRefusedWhileTheFirstRuns) {
  const auto dir = scratch("lock");
  // 4 chains x 1000000 steps, a checkpoint every second: several seconds of work.
  const auto job = write_job(dir, "chains = 4\nsteps = 1000000\nburn_in = 0\nrecord_every = 5000\nseed = 3", 1.0);
  const auto out = dir / "out";
  const pid_t first = spawn(2, job, out, "", dir / "first.log");
  ASSERT_TRUE(wait_for([&] { return committed_checkpoints(out) >= 2; }, first, 120)) << read_text(dir / "first.log");
  EXPECT_EQ(run(2, job, out, "--resume", dir / "resume.log"), 2);
  const std::string resume_log = read_text(dir / "resume.log");
  EXPECT_NE(resume_log.find("is in use by host"), std::string::npos) << resume_log;
  EXPECT_NE(resume_log.find("pid"), std::string::npos) << resume_log;
  EXPECT_EQ(run(1, job, out, "", dir / "fresh.log"), 2);
  EXPECT_NE(read_text(dir / "fresh.log").find("is in use by host"), std::string::npos) << read_text(dir / "fresh.log");
  ASSERT_TRUE(still_running(first)) << "the first run ended before the second started; make it longer";
  EXPECT_EQ(wait_exit(first), 0) << read_text(dir / "first.log");
  expect_intact_finished_run(out, 200);
  // Once the first run has ended the folder is free again.
  EXPECT_EQ(run(1, job, out, "--resume", dir / "after.log"), 0) << read_text(dir / "after.log");
}

TEST(RunFolder, OfTwoFreshRunsStartedTogetherOneRunsAndTheOtherIsRefused) {
  const auto dir = scratch("pair");
  const auto job = write_job(dir, "chains = 2\nsteps = 20000\nburn_in = 0\nrecord_every = 100\nseed = 4");
  for (int attempt = 0; attempt < 3; ++attempt) {
    const auto out = dir / ("out" + std::to_string(attempt));
    const pid_t a = spawn(1, job, out, "", dir / "a.log");
    const pid_t b = spawn(1, job, out, "", dir / "b.log");
    int exits[2] = {wait_exit(a), wait_exit(b)};
    std::sort(exits, exits + 2);
    EXPECT_EQ(exits[0], 0) << read_text(dir / "a.log") << read_text(dir / "b.log");
    EXPECT_EQ(exits[1], 2) << read_text(dir / "a.log") << read_text(dir / "b.log");
    expect_intact_finished_run(out, 200);
  }
}

}  // namespace
}  // namespace planmill
