// `planmill sweep run` under mpiexec, stopped by the signal a scheduler sends and run again: the
// stopped setting is resumed (not begun anew), the one not yet begun is run, and the finished
// sweep compares as any other.
#include <gtest/gtest.h>

#include <csignal>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>

#include "run_jobs.hpp"
#include "run_processes.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using test::read_text;
using test::shell;

const std::string kBin = PLANMILL_BINARY;

TEST(SweepResume, StoppedSettingIsResumedAndTheRestRun) {
  const fs::path dir = test::scratch_dir("planmill-sweep-resume", "signal");
  // Long enough to outlast the first checkpoint (a second) by several seconds at ~10^5 steps/s.
  (void)test::write_synth_job(dir, "chains = 2\nsteps = 400000\nrecord_every = 1000\nseed = 6", 1);
  std::ofstream(dir / "sweep.toml") << "job = \"state/job.toml\"\n"
                                       "[[axis]]\nkey = \"rules.population_tolerance\"\nvalues = [0.03, 0.06]\n";
  const fs::path out = dir / "out";
  ASSERT_EQ(shell(kBin + " sweep plan " + (dir / "sweep.toml").string() + " --out " + out.string() + " >/dev/null"), 0);
  const fs::path first = out / "settings/000-population_tolerance=0.03/run";
  const fs::path second = out / "settings/001-population_tolerance=0.06/run";

  const std::string run = test::mpiexec_prefix(2) + kBin + " sweep run " + out.string() + " --quiet";
  const pid_t pid = test::spawn_shell(run + " >" + (dir / "first.out").string() + " 2>&1");
  ASSERT_TRUE(test::wait_for([&] { return test::committed_checkpoints(first) >= 1; }, pid, 120))
      << read_text(dir / "first.out");
  ::kill(pid, SIGUSR2);  // mpiexec passes it on; every rank checkpoints and stops
  EXPECT_EQ(test::wait_exit(pid), 4) << read_text(dir / "first.out");
  EXPECT_EQ(shell(kBin + " status " + first.string() + " >/dev/null"), 7);  // unfinished
  EXPECT_FALSE(fs::exists(second));                                     // never begun
  EXPECT_EQ(shell(kBin + " sweep compare " + out.string() + " >/dev/null"), 7);

  ASSERT_EQ(shell(run + " >" + (dir / "second.out").string() + " 2>&1"), 0) << read_text(dir / "second.out");
  const std::string again = read_text(dir / "second.out");
  EXPECT_NE(again.find("setting 000-population_tolerance=0.03: resuming"), std::string::npos) << again;
  EXPECT_NE(again.find("setting 001-population_tolerance=0.06: running"), std::string::npos) << again;
  for (const fs::path& r : {first, second}) EXPECT_EQ(shell(kBin + " status " + r.string() + " >/dev/null"), 0) << r;
  const nlohmann::json state = nlohmann::json::parse(read_text(first / "run-state.json"));
  EXPECT_GE(state.at("sessions").size(), 2u);  // the stopped run went on, it was not begun anew
  EXPECT_EQ(nlohmann::json::parse(read_text(second / "run-state.json")).at("sessions").size(), 1u);
  // 400 records per chain: enough for the verdict to count; pass or fail, compare says which.
  const int status = shell(kBin + " sweep compare " + out.string() + " --json " + (dir / "c.json").string() +
                           " >/dev/null");
  EXPECT_TRUE(status == 0 || status == 3) << status;
  const nlohmann::json c = nlohmann::json::parse(read_text(dir / "c.json"));
  for (const auto& s : c.at("settings")) EXPECT_EQ(s.at("status"), "finished");
}

}  // namespace
}  // namespace planmill
