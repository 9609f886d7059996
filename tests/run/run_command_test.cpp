// `planmill run` end to end under real OpenMPI: determinism over rank counts, checkpoint and
// resume after SIGKILL and SIGTERM, bad input. Each test starts `mpiexec -n R planmill run`.
#include <cstring>
#include <gtest/gtest.h>
#include <signal.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <functional>
#include <sstream>
#include <string>
#include <thread>
#include <vector>

#include "planmill/run/run_reader.hpp"
#include "../support/run_jobs.hpp"
#include "../support/run_processes.hpp"


namespace planmill {
namespace {

namespace fs = std::filesystem;

fs::path scratch(const std::string& name) { return test::scratch_dir("planmill-run-test", name); }
using test::shell;
fs::path write_job(const fs::path& dir, const std::string& sampler, double checkpoint_seconds = 300) {
  return test::write_synth_job(dir, sampler, checkpoint_seconds);
}

std::string mpiexec(int ranks) { return test::mpiexec_prefix(ranks); }

int run(int ranks, const fs::path& job, const fs::path& out, const std::string& extra = "") {
  return shell(mpiexec(ranks) + PLANMILL_BINARY + " run " + job.string() + " --output " + out.string() +
               " --quiet " + extra + " >" + out.string() + ".log 2>&1");
}

bool same_bits(const std::vector<double>& a, const std::vector<double>& b) {
  return a.size() == b.size() && std::memcmp(a.data(), b.data(), a.size() * sizeof(double)) == 0;
}

// Every recorded plan, step and observable of every chain (and of every recorded rung) must be
// identical.
void expect_same_records(const fs::path& a, const fs::path& b) {
  RunReader x(a.string()), y(b.string());
  ASSERT_EQ(x.chains(), y.chains());
  for (const auto c : x.chains()) {
    ASSERT_EQ(x.record_count(c), y.record_count(c)) << "chain " << c;
    ASSERT_EQ(x.recorded_rungs(c), y.recorded_rungs(c)) << "chain " << c;
    for (std::uint64_t rung = 0; rung < x.recorded_rungs(c); ++rung) {
      EXPECT_EQ(x.record_steps(c, rung), y.record_steps(c, rung)) << "chain " << c << " rung " << rung;
      // Bit for bit: a measure may be NaN (declination when one party wins every district).
      EXPECT_TRUE(same_bits(x.read_observables(c, rung), y.read_observables(c, rung))) << "chain " << c << " rung " << rung;
      ASSERT_EQ(x.sorted_names(), y.sorted_names());
      for (const auto& name : x.sorted_names())
        EXPECT_TRUE(same_bits(x.read_sorted(c, name, rung), y.read_sorted(c, name, rung))) << name << " chain " << c;
      for (std::uint64_t r = 0; r < x.record_count(c); ++r) {
        if (x.read_plan(c, r, rung) != y.read_plan(c, r, rung)) {
          ADD_FAILURE() << "chain " << c << " rung " << rung << " record " << r << " differs between "
                        << a << " and " << b;
          return;
        }
      }
    }
  }
  EXPECT_TRUE(x.verify().empty());
  EXPECT_TRUE(y.verify().empty());
  EXPECT_TRUE(x.verify_rungs().empty());
  EXPECT_TRUE(y.verify_rungs().empty());
}

TEST(Run, RecordsTheSamePlansWhateverTheNumberOfRanks) {
  const auto dir = scratch("ranks");
  const auto job = write_job(dir, "chains = 5\nsteps = 1500\nburn_in = 100\nrecord_every = 7\nseed = 9");
  ASSERT_EQ(run(1, job, dir / "r1"), 0);
  {
    RunReader one((dir / "r1").string());
    ASSERT_EQ(one.chains().size(), 5U);
    // Records at steps s in (100, 1500] with s % 7 == 0: 214 - 14 = 200 per chain.
    EXPECT_EQ(one.record_count(3), 200U);
    EXPECT_EQ(one.record_steps(3).front(), 105U);
    EXPECT_TRUE(one.state().finished);
    EXPECT_EQ(one.state().sessions.back().ranks, 1);
  }
  for (const int ranks : {2, 3, 4}) {
    const auto out = dir / ("r" + std::to_string(ranks));
    ASSERT_EQ(run(ranks, job, out), 0) << "ranks " << ranks;
    EXPECT_EQ(RunReader(out.string()).state().sessions.back().ranks, ranks);
    expect_same_records(dir / "r1", out);
  }
}

TEST(Run, DifferentSeedsGiveDifferentPlans) {
  const auto dir = scratch("seeds");
  const auto a = write_job(dir, "chains = 1\nsteps = 200\nseed = 1");
  ASSERT_EQ(run(1, a, dir / "a"), 0);
  std::string text;
  {
    std::ifstream in(a);
    text.assign(std::istreambuf_iterator<char>(in), {});
  }
  std::ofstream(dir / "state" / "job2.toml") << text.replace(text.find("seed = 1"), 8, "seed = 2");
  ASSERT_EQ(run(1, dir / "state" / "job2.toml", dir / "b"), 0);
  RunReader x((dir / "a").string()), y((dir / "b").string());
  EXPECT_NE(x.read_plan(0, 199), y.read_plan(0, 199));
}

pid_t spawn_run(int ranks, const fs::path& job, const fs::path& out) {
  return test::spawn_shell(mpiexec(ranks) + PLANMILL_BINARY + " run " + job.string() + " --output " +
                           out.string() + " --quiet >" + out.string() + ".log 2>&1");
}

using test::children_of;
using test::committed_checkpoints;
using test::wait_exit;
using test::wait_for;

// Long enough to be interrupted after a checkpoint (1 s apart), short enough for the suite.
constexpr const char* kLongSampler = "chains = 4\nsteps = 300000\nburn_in = 1000\nrecord_every = 50\nseed = 3";

TEST(Run, ResumeAfterSigkillOfOneRankEqualsAnUninterruptedRun) {
  const auto dir = scratch("sigkill");
  const auto job = write_job(dir, kLongSampler, 1.0);
  const auto out = dir / "killed";
  const pid_t launcher = spawn_run(2, job, out);
  ASSERT_TRUE(wait_for([&] { return committed_checkpoints(out) >= 2; }, launcher, 120)) << "no checkpoint";
  const auto ranks = children_of(launcher);
  ASSERT_FALSE(ranks.empty());
  ::kill(ranks.back(), SIGKILL);
  EXPECT_NE(wait_exit(launcher), 0);
  const RunState interrupted = read_run_state(RunLayout{out});
  ASSERT_FALSE(interrupted.finished) << "the run ended before the kill; make it longer";
  EXPECT_EQ(interrupted.sessions.back().ended, "");

  ASSERT_EQ(run(2, job, out, "--resume"), 0);
  const RunState resumed = read_run_state(RunLayout{out});
  EXPECT_TRUE(resumed.finished);
  EXPECT_EQ(resumed.sessions.size(), 2U);
  ASSERT_EQ(run(2, job, dir / "straight"), 0);
  expect_same_records(dir / "straight", out);
}

// A long 2-rank run in a fresh scratch folder, started and under way: the run state appears once
// every chain is built, and a second later the chains are stepping. launcher is -1 if no state
// appeared.
struct LongRun {
  fs::path dir, job, out;
  pid_t launcher = -1;
};
LongRun start_long_run(const std::string& name) {
  LongRun r;
  r.dir = scratch(name);
  r.job = write_job(r.dir, kLongSampler, 300.0);
  r.out = r.dir / "stopped";
  const pid_t launcher = spawn_run(2, r.job, r.out);
  if (!wait_for([&] { return fs::exists(RunLayout{r.out}.state_file()); }, launcher, 120)) return r;
  std::this_thread::sleep_for(std::chrono::milliseconds(1000));
  r.launcher = launcher;
  return r;
}

TEST(Run, SigtermCheckpointsAndStopsAndResumeOnOtherRankCountsEqualsAnUninterruptedRun) {
  const auto [dir, job, out, launcher] = start_long_run("sigterm");
  ASSERT_GT(launcher, 0);
  for (const pid_t rank : children_of(launcher)) ::kill(rank, SIGTERM);
  EXPECT_EQ(wait_exit(launcher), 4) << "a rank stopped on SIGTERM exits with 4 (resumable)";
  const RunState stopped = read_run_state(RunLayout{out});
  ASSERT_FALSE(stopped.finished);
  EXPECT_EQ(stopped.stop_reason, "checkpointed on signal");
  EXPECT_GT(stopped.chains[0].records, 0U);

  ASSERT_EQ(run(3, job, out, "--resume"), 0);  // a different rank count is fine
  ASSERT_EQ(run(1, job, dir / "straight"), 0);
  expect_same_records(dir / "straight", out);
  EXPECT_EQ(run(2, job, out, "--resume"), 0) << "resuming a finished run has nothing to do";
}

// What a batch script does with the scheduler's warning: SIGUSR2 to mpiexec itself, which passes
// it on to every rank and, unlike SIGTERM, lets them end by themselves, so the 4 reaches the script.
TEST(Run, SigusrTwoToMpiexecCheckpointsAndTheLauncherExitsWithFour) {
  const auto [dir, job, out, launcher] = start_long_run("sigusr2");
  ASSERT_GT(launcher, 0);
  ::kill(launcher, SIGUSR2);
  EXPECT_EQ(wait_exit(launcher), 4) << "mpiexec passes the ranks' status 4 on";
  const RunState stopped = read_run_state(RunLayout{out});
  ASSERT_FALSE(stopped.finished);
  EXPECT_EQ(stopped.stop_reason, "checkpointed on signal");
  ASSERT_EQ(run(2, job, out, "--resume"), 0);
  ASSERT_EQ(run(1, job, dir / "straight"), 0);
  expect_same_records(dir / "straight", out);
}

TEST(Run, RefusesToOverwriteARunAndToResumeWithAChangedJob) {
  const auto dir = scratch("refuse");
  const auto job = write_job(dir, "chains = 2\nsteps = 100");
  ASSERT_EQ(run(1, job, dir / "out"), 0);
  const std::string before = [&] {
    std::ifstream in(dir / "out" / "run-state.json");
    return std::string(std::istreambuf_iterator<char>(in), {});
  }();
  EXPECT_EQ(run(2, job, dir / "out"), 2);
  std::ofstream(job, std::ios::app) << "# changed\n";
  EXPECT_EQ(run(2, job, dir / "out", "--resume"), 2);
  std::ifstream in(dir / "out" / "run-state.json");
  EXPECT_EQ(std::string(std::istreambuf_iterator<char>(in), {}), before) << "the run was touched";
  std::ifstream log(dir / "out.log");
  const std::string message(std::istreambuf_iterator<char>(log), {});
  EXPECT_NE(message.find("differs from the job this run started with"), std::string::npos) << message;
}

// --until-converged: blocks of (steps - burn_in) steps until the verdict passes or the budget ends.
TEST(Run, UntilConvergedStopsWhenTheVerdictPassesOrTheBudgetIsSpent) {
  const auto dir = scratch("converge");
  const auto easy = write_job(dir, "chains = 4\nsteps = 600\nburn_in = 100\nrecord_every = 2\nseed = 4");
  std::ofstream(easy, std::ios::app) << "[verdict]\nrhat_max = 1.05\ness_min = 200\n";
  ASSERT_EQ(run(2, easy, dir / "easy", "--until-converged --max-steps 20100"), 0);
  const RunState done = read_run_state(RunLayout{dir / "easy"});
  EXPECT_EQ(done.stop_reason, "converged");
  EXPECT_TRUE(done.finished);
  const std::uint64_t steps = done.chains[0].steps;
  EXPECT_EQ((steps - 100) % 500, 0U) << "whole blocks of 500 steps after burn-in";
  EXPECT_LE(steps, 20100U);
  // The verdict diagnose gives on the finished run agrees.
  EXPECT_EQ(shell(std::string(PLANMILL_BINARY) + " diagnose " + (dir / "easy").string() + " >/dev/null"), 0);

  const auto hard = write_job(scratch("converge-hard"), "chains = 2\nsteps = 300\nburn_in = 50\nseed = 4");
  std::ofstream(hard, std::ios::app) << "[verdict]\ness_min = 1000000\n";
  const auto out = dir / "hard";
  EXPECT_EQ(run(1, hard, out, "--until-converged --max-steps 800"), 3);
  const RunState spent = read_run_state(RunLayout{out});
  EXPECT_EQ(spent.chains[0].steps, 800U) << "300, then 550, then 800 (capped)";
  EXPECT_EQ(spent.stop_reason, "step budget spent before convergence");
  std::ifstream log(out.string() + ".log");
  const std::string text(std::istreambuf_iterator<char>(log), {});
  EXPECT_NE(text.find("not converged within --max-steps 800"), std::string::npos) << text;
  EXPECT_EQ(run(1, hard, out, "--until-converged"), 2) << "--until-converged needs --max-steps";
}

// Tempering: each chain of the run is a ladder of replicas (on 2 ranks, ladder 1 of 3 is shared
// by both); the target rung is recorded. The same determinism and resume guarantees hold.
constexpr const char* kLadderSampler =
    "kernel = \"flip\"\nchains = 3\nsteps = 300\nburn_in = 60\nrecord_every = 3\nseed = 8\n"
    "[tempering]\nrungs = 3\nhottest_beta = 0.2\nswap_every = 5\ntune = true\n"
    "[rules.weights]\ncut_edges = 0.5";

TEST(Run, LaddersRecordTheSamePlansOnAnyRankCountAndResumeExactly) {
  const auto dir = scratch("ladders");
  const auto job = write_job(dir, kLadderSampler);
  ASSERT_EQ(run(1, job, dir / "r1"), 0);
  ASSERT_EQ(run(3, job, dir / "r3"), 0);
  expect_same_records(dir / "r1", dir / "r3");
  const RunState one = read_run_state(RunLayout{dir / "r1"});
  ASSERT_FALSE(one.chains[0].ladder.empty());
  EXPECT_NE(one.chains[0].ladder.find("\"tuned\":true"), std::string::npos) << one.chains[0].ladder;
  EXPECT_EQ(one.chains[0].counters.steps, 3U * 300U) << "kernel steps of the three replicas";

  // Stop at a checkpoint (the end of a block of --until-converged) and go on from it.
  std::ofstream(job, std::ios::app) << "[verdict]\ness_min = 1000000\n";
  ASSERT_EQ(run(2, job, dir / "straight", "--until-converged --max-steps 780"), 3);
  ASSERT_EQ(run(2, job, dir / "resumed", "--until-converged --max-steps 540"), 3);
  ASSERT_EQ(run(1, job, dir / "resumed", "--resume --until-converged --max-steps 780"), 3);
  EXPECT_EQ(read_run_state(RunLayout{dir / "resumed"}).chains[2].steps, 780U);
  expect_same_records(dir / "straight", dir / "resumed");
}

// Replicas of one ladder spread over ranks, every rung recorded, checkpoints at block ends: the
// records of every rung and the committed ladder snapshots are the same on 1, 3 and 4 ranks
// (4 ranks: each ladder on two; 3 ranks: 3 + 3 + 2 replicas, both ladders shared).
TEST(Run, LadderReplicasOnDifferentRanksGiveTheSameRunAndEveryRungIsRecorded) {
  const auto dir = scratch("spread-ladders");
  const auto job = write_job(dir,
                             "kernel = \"flip\"\nchains = 2\nsteps = 600\nburn_in = 200\n"
                             "record_every = 4\nseed = 13\n"
                             "[tempering]\nrungs = 4\nhottest_beta = 0.1\nswap_every = 3\n"
                             "tune = true\nrecord = \"all\"\n[rules.weights]\ncut_edges = 0.5\n"
                             "[verdict]\ness_min = 1000000");
  // Blocks of 400 steps end at 600, 1000, 1400, 1800 and 2000, each with a checkpoint.
  const std::string blocks = "--until-converged --max-steps 2000";
  ASSERT_EQ(run(1, job, dir / "r1", blocks), 3);
  ASSERT_EQ(run(4, job, dir / "r4", blocks), 3);
  ASSERT_EQ(run(3, job, dir / "r3", blocks), 3);
  expect_same_records(dir / "r1", dir / "r4");
  expect_same_records(dir / "r1", dir / "r3");
  // Stopped at 1000 steps on 4 ranks, resumed on 3: the ladders' parts are put back elsewhere.
  ASSERT_EQ(run(4, job, dir / "resumed", "--until-converged --max-steps 1000"), 3);
  ASSERT_EQ(run(3, job, dir / "resumed", "--resume " + blocks), 3);
  expect_same_records(dir / "r1", dir / "resumed");
  const RunState one = read_run_state(RunLayout{dir / "r1"});
  const RunState four = read_run_state(RunLayout{dir / "r4"});
  const RunState three = read_run_state(RunLayout{dir / "r3"});
  EXPECT_EQ(four.checkpoints, 5U) << "checkpoints mid-run, with the holders' snapshots combined";
  for (std::size_t c = 0; c < 2; ++c) {
    EXPECT_EQ(one.chains[c].recorded_rungs, 4U);
    EXPECT_EQ(one.chains[c].records, (2000U - 200U) / 4U);
    EXPECT_EQ(one.chains[c].snapshot, four.chains[c].snapshot) << "chain " << c;
    EXPECT_EQ(one.chains[c].snapshot, three.chains[c].snapshot) << "chain " << c;
    EXPECT_EQ(one.chains[c].ladder, four.chains[c].ladder) << "chain " << c;
    EXPECT_EQ(four.chains[c].counters.steps, 4U * 2000U) << "summed over the holders";
  }
  // The hot rungs hold other plans than the target rung: they are separate sequences.
  RunReader reader((dir / "r4").string());
  EXPECT_NE(reader.read_observables(0, 0), reader.read_observables(0, 3));
  // A plain reader of the ensemble sees the two chains only.
  EXPECT_EQ(reader.chains(), (std::vector<std::uint64_t>{0, 1}));
}

}  // namespace
}  // namespace planmill
