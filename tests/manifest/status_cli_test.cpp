// `planmill status RUNDIR` as a batch script uses it: the exit status of a finished, a running, a
// stopped and a damaged run, of a folder stopped before its first checkpoint, and of input that
// is no run folder; the text and the JSON say the same.
#include <gtest/gtest.h>

#include <csignal>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>

#include "command_output.hpp"
#include "planmill/manifest/run_status.hpp"
#include "run_jobs.hpp"
#include "run_processes.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using nlohmann::json;

struct Status {
  int exit = -1;
  std::string text;
  json j;
};

Status status_of(const fs::path& run_dir, const std::string& options = "") {
  Status s;
  const std::string base = std::string(PLANMILL_BINARY) + " status '" + run_dir.string() + "' " + options;
  s.exit = test::shell(base + " > '" + run_dir.string() + ".txt' 2>&1");
  s.text = test::read_text(run_dir.string() + ".txt");
  EXPECT_EQ(test::shell(base + " --json > '" + run_dir.string() + ".json' 2>/dev/null"), s.exit);
  if (s.exit != 2) s.j = json::parse(test::read_text(run_dir.string() + ".json"));
  return s;
}

TEST(StatusCli, AFinishedRunExitsZeroWithItsChainsAndVerdict) {
  const fs::path dir = test::scratch_dir("planmill-status", "finished");
  const fs::path job = test::write_synth_job(dir, "chains = 2\nsteps = 600\nrecord_every = 5\nseed = 3");
  ASSERT_EQ(test::shell(std::string(PLANMILL_BINARY) + " run " + job.string() + " --output " +
                        (dir / "run").string() + " --quiet"),
            0);
  const Status s = status_of(dir / "run");
  EXPECT_EQ(s.exit, 0) << s.text;
  EXPECT_NE(s.text.find("condition    finished"), std::string::npos) << s.text;
  EXPECT_NE(s.text.find("plan files   every check passed"), std::string::npos) << s.text;
  EXPECT_NE(s.text.find("verdict      "), std::string::npos) << s.text;
  EXPECT_EQ(s.j["condition"], "finished");
  EXPECT_EQ(s.j["exit_status"], 0);
  ASSERT_EQ(s.j["chains"].size(), 2U);
  for (const auto& c : s.j["chains"]) {
    EXPECT_EQ(c["steps"], 600U);
    EXPECT_EQ(c["planned_steps"], 600U);
    EXPECT_EQ(c["records"], 120U);
  }
  EXPECT_EQ(s.j["verdict"]["verdict"], "fail");  // 120 records per chain: too short for the rule
  EXPECT_NE(s.text.find("verdict      fail (too short"), std::string::npos) << s.text;

  // A flipped byte in a plan file: damaged (7), named; --skip-checks does not read the files.
  fs::path plan_file;
  for (const auto& e : fs::directory_iterator(dir / "run" / "plans")) plan_file = e.path();
  {
    std::fstream f(plan_file, std::ios::in | std::ios::out | std::ios::binary);
    f.seekg(0, std::ios::end);
    const auto size = static_cast<std::streamoff>(f.tellg());
    for (std::streamoff at = size / 2; at < size / 2 + 64; ++at) {
      f.seekg(at);
      const char c = static_cast<char>(f.get());
      f.seekp(at);
      f.put(static_cast<char>(c ^ 0x5A));
    }
  }
  const Status damaged = status_of(dir / "run");
  EXPECT_EQ(damaged.exit, 8) << damaged.text;
  EXPECT_NE(damaged.text.find("condition    damaged"), std::string::npos) << damaged.text;
  EXPECT_FALSE(damaged.j["problems"].empty());
  const Status unchecked = status_of(dir / "run", "--skip-checks");
  EXPECT_EQ(unchecked.exit, 0) << unchecked.text;
  EXPECT_NE(unchecked.text.find("not checked"), std::string::npos) << unchecked.text;
}

TEST(StatusCli, ARunningThenStoppedRunIsUnfinished) {
  const fs::path dir = test::scratch_dir("planmill-status", "stopped");
  const fs::path job =
      test::write_synth_job(dir, "chains = 2\nsteps = 50000000\nrecord_every = 1000\nseed = 3", 300);
  const fs::path out = dir / "run";
  const pid_t pid = test::spawn_shell(std::string(PLANMILL_BINARY) + " run " + job.string() + " --output " +
                                      out.string() + " --quiet");
  ASSERT_TRUE(test::wait_for([&] { return fs::exists(RunLayout{out}.state_file()); }, pid, 120));
  const Status running = status_of(out, "--skip-checks");
  EXPECT_EQ(running.exit, 7) << running.text;
  EXPECT_NE(running.text.find("running now  host "), std::string::npos) << running.text;
  EXPECT_TRUE(running.j["running_now"].is_string());
  ::kill(pid, SIGTERM);
  ASSERT_EQ(test::wait_exit(pid), 4);
  const Status stopped = status_of(out);
  EXPECT_EQ(stopped.exit, 7) << stopped.text;
  EXPECT_TRUE(stopped.j["running_now"].is_null());
  EXPECT_NE(stopped.text.find("--resume continues it"), std::string::npos) << stopped.text;
  for (const auto& c : stopped.j["chains"]) EXPECT_LT(c["steps"].get<std::uint64_t>(), 50000000U);
}

TEST(StatusCli, NoCheckpointYetBadStateAndNoRunFolder) {
  const fs::path dir = test::scratch_dir("planmill-status", "odd");
  fs::create_directories(dir / "early");
  std::ofstream(dir / "early" / "job.toml") << "# a run's job copy, no checkpoint yet\n";
  const Status early = status_of(dir / "early");
  EXPECT_EQ(early.exit, 7) << early.text;
  EXPECT_NE(early.text.find("before its first checkpoint"), std::string::npos) << early.text;

  fs::create_directories(dir / "broken");
  std::ofstream(dir / "broken" / "run-state.json") << "{ not json";
  const Status broken = status_of(dir / "broken");
  EXPECT_EQ(broken.exit, 8) << broken.text;
  EXPECT_NE(broken.text.find("the committed state cannot be read"), std::string::npos) << broken.text;

  fs::create_directories(dir / "empty");
  const Status empty = status_of(dir / "empty");
  EXPECT_EQ(empty.exit, 2);
  EXPECT_NE(empty.text.find("holds no run"), std::string::npos) << empty.text;
  const Status missing = status_of(dir / "missing");
  EXPECT_EQ(missing.exit, 2);
  EXPECT_NE(missing.text.find("is not a folder"), std::string::npos) << missing.text;
}

// Common practice: ISO 8601 UTC as run-state.json writes it; 2026-12-03T00:00:00Z is 1,796,256,000
// seconds after 1970-01-01 (20,790 days; computed with `date -u -d 2026-12-03 +%s`).
TEST(StatusTime, ReadsTheCheckpointTimes) {
  EXPECT_EQ(parse_utc_iso8601("2026-12-03T00:00:00Z"), std::optional<std::time_t>(1796256000));
  EXPECT_EQ(parse_utc_iso8601("2026-12-03T00:00:01Z").value() - 1796256000, 1);
  EXPECT_FALSE(parse_utc_iso8601("2026-12-03 00:00:00").has_value());
  EXPECT_FALSE(parse_utc_iso8601("").has_value());
}

}  // namespace
}  // namespace planmill
