// `planmill merge RUNDIR` and `planmill diagnose RUNDIR` as a user runs them: exit statuses,
// messages, the manifest they leave, and the diagnose table of a run dir against the table of
// `diagnose --traces` on the same draws written as a long CSV.
#include <gtest/gtest.h>

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>

#include "manifest_support.hpp"
#include "planmill/run/run_reader.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using nlohmann::json;
using test::run_planmill;

std::string quoted(const fs::path& p) { return "'" + p.string() + "'"; }

// 4 chains x 400 records of independent draws: passes 1.01 / 400 (ESS near 1600).
test::FixtureRunOptions mixed_run() {
  return {.chains = 4, .ranks = 2, .segments = 2, .records_per_segment = 200};
}

TEST(MergeCli, WritesTheManifestAndSaysWhere) {
  const test::ScratchDir scratch("planmill-merge-cli");
  const auto& dir = scratch.path;
  const auto run_dir = dir / "run";
  test::write_fixture_run(run_dir, {.chains = 2, .ranks = 2, .segments = 2});
  std::ofstream(run_dir / "manifest.json") << "an older, broken manifest";
  const auto o = run_planmill(dir, "merge " + quoted(run_dir));
  EXPECT_EQ(o.status, 0) << o.out << o.err;
  EXPECT_NE(o.out.find((run_dir / "manifest.json").string()), std::string::npos) << o.out;
  const json m = json::parse(test::slurp(run_dir / "manifest.json"));  // replaced whole
  EXPECT_EQ(m["run_id"], "fixture-run");
  EXPECT_EQ(m["totals"]["records"], 80U);
  EXPECT_TRUE(m["problems"].empty());
  for (const auto& e : fs::directory_iterator(run_dir)) {
    EXPECT_EQ(e.path().filename().string().find(".tmp."), std::string::npos) << e.path();
  }
}

TEST(MergeCli, ADamagedPlanFileIsReportedWithExitThreeAndTheManifestIsStillWritten) {
  const test::ScratchDir scratch("planmill-merge-cli");
  const auto& dir = scratch.path;
  test::write_fixture_run(dir / "run", {.chains = 2, .ranks = 2, .segments = 2});
  fs::resize_file(dir / "run" / RunLayout::plan_file_name(1, 1), 100);  // chain 1, records 20..39
  const auto o = run_planmill(dir, "merge " + quoted(dir / "run"));
  EXPECT_EQ(o.status, 3) << o.out << o.err;
  EXPECT_NE(o.err.find("chain 1, records 20..39"), std::string::npos) << o.err;
  const json m = json::parse(test::slurp(dir / "run" / "manifest.json"));
  ASSERT_EQ(m["problems"].size(), 1U);
  EXPECT_EQ(m["problems"][0]["chain"], 1U);
}

TEST(MergeCli, NotARunDirIsOneLineAndExitTwo) {
  const test::ScratchDir scratch("planmill-merge-cli");
  const auto& dir = scratch.path;
  for (const auto& target : {dir / "absent", dir}) {  // no folder; a folder without run-state.json
    const auto o = run_planmill(dir, "merge " + quoted(target));
    EXPECT_EQ(o.status, 2) << o.out << o.err;
    EXPECT_NE(o.err.find(target.string()), std::string::npos) << o.err;
    EXPECT_EQ(std::count(o.err.begin(), o.err.end(), '\n'), 1) << o.err;
  }
  EXPECT_FALSE(fs::exists(dir / "manifest.json"));
}

TEST(DiagnoseRunDirCli, ExitStatusFollowsTheJobsVerdictUnlessTheCommandLineOverridesIt) {
  const test::ScratchDir scratch("planmill-diagnose-run-cli");
  const auto& dir = scratch.path;
  const auto run_dir = dir / "run";
  test::write_mixed_run(run_dir, mixed_run());
  // No [verdict] in the job: defaults 1.01 and 400.
  auto o = run_planmill(dir, "diagnose " + quoted(run_dir));
  EXPECT_EQ(o.status, 0) << o.out << o.err;
  EXPECT_NE(o.out.find("verdict: pass"), std::string::npos) << o.out;
  EXPECT_NE(o.out.find("4 chains x 400 draws"), std::string::npos) << o.out;
  const json m = json::parse(test::slurp(run_dir / "manifest.json"));  // built, as none existed
  EXPECT_EQ(m["diagnostics"]["verdict"], "pass");
  EXPECT_EQ(m["run_id"], "fixture-run");

  std::ofstream(run_dir / "job.toml") << test::job_text_with_verdict("ess_min = 100000\n");
  o = run_planmill(dir, "diagnose " + quoted(run_dir));
  EXPECT_EQ(o.status, 3) << o.out << o.err;
  EXPECT_NE(o.out.find("verdict: fail (4 of 4"), std::string::npos) << o.out;
  EXPECT_NE(o.out.find("more steps"), std::string::npos) << o.out;  // the suggestion
  EXPECT_EQ(json::parse(test::slurp(run_dir / "manifest.json"))["diagnostics"]["rule"]["ess_min"],
            100000.0);

  o = run_planmill(dir, "diagnose " + quoted(run_dir) + " --ess-min 100");
  EXPECT_EQ(o.status, 0) << o.out << o.err;
  EXPECT_NE(o.out.find("command line"), std::string::npos) << o.out;
}

TEST(DiagnoseRunDirCli, BadInputExitsTwo) {
  const test::ScratchDir scratch("planmill-diagnose-run-cli");
  const auto& dir = scratch.path;
  EXPECT_EQ(run_planmill(dir, "diagnose " + quoted(dir / "absent")).status, 2);
  EXPECT_EQ(run_planmill(dir, "diagnose " + quoted(dir)).status, 2);
  test::write_fixture_run(dir / "run", {.chains = 2, .ranks = 1, .segments = 1});
  EXPECT_EQ(run_planmill(dir, "diagnose " + quoted(dir / "run") + " --rhat-max 0.9").status, 2);
  std::ofstream(dir / "run" / "job.toml") << test::job_text_with_verdict("rhat_max = \"x\"\n");
  const auto o = run_planmill(dir, "diagnose " + quoted(dir / "run"));
  EXPECT_EQ(o.status, 2) << o.out << o.err;
  EXPECT_NE(o.err.find("verdict.rhat_max"), std::string::npos) << o.err;
}

TEST(DiagnoseRunDirCli, DamagedChainsAreLeftOutAndTheVerdictFails) {
  const test::ScratchDir scratch("planmill-diagnose-run-cli");
  const auto& dir = scratch.path;
  test::write_mixed_run(dir / "run", mixed_run());
  fs::resize_file(dir / "run" / RunLayout::plan_file_name(1, 1), 100);  // chains 1 and 3
  const auto o = run_planmill(dir, "diagnose " + quoted(dir / "run"));
  EXPECT_EQ(o.status, 3) << o.out << o.err;
  EXPECT_NE(o.out.find("left out: chain 1"), std::string::npos) << o.out;
  EXPECT_NE(o.out.find("left out: chain 3"), std::string::npos) << o.out;
  EXPECT_NE(o.out.find("2 chains x 400 draws"), std::string::npos) << o.out;
  // One verdict line, and it fails (the other chains alone pass: it says so inside the line).
  const auto first = o.out.find("verdict:");
  ASSERT_NE(first, std::string::npos) << o.out;
  EXPECT_EQ(o.out.find("verdict:", first + 1), std::string::npos) << o.out;
  EXPECT_EQ(o.out.compare(first, 14, "verdict: fail "), 0) << o.out;
  EXPECT_NE(o.out.find("2 chain(s) left out"), std::string::npos) << o.out;
}

// county_splits (observable 2) always 0, the others mixed. The verdict rule (verdict.hpp: a
// observable equal in every draw is not judged) is the same for both forms of diagnose.
TEST(DiagnoseRunDirCli, AConstantObservableIsNaNWithTheReasonAndNotJudged) {
  const test::ScratchDir scratch("planmill-diagnose-run-cli");
  const auto& dir = scratch.path;
  Rng rng = make_stream(5, 5);
  test::write_run_with_observables(
      dir / "run", mixed_run(),
      [&rng](std::uint64_t, std::size_t, std::size_t q) { return q == 2 ? 0.0 : uniform01(rng); });
  const auto o = run_planmill(dir, "diagnose " + quoted(dir / "run"));
  EXPECT_EQ(o.status, 0) << o.out << o.err;
  const std::string table = test::table_of(o.out);
  EXPECT_NE(table.find("all draws are equal"), std::string::npos) << o.out;
  EXPECT_NE(o.out.find("county_splits: not judged"), std::string::npos) << o.out;
  EXPECT_NE(o.out.find("verdict: pass"), std::string::npos) << o.out;
  const json m = json::parse(test::slurp(dir / "run" / "manifest.json"));
  EXPECT_EQ(m["diagnostics"]["observables"][3]["observable"], "county_splits");
  EXPECT_EQ(m["diagnostics"]["observables"][3]["judged"], "not judged");
  EXPECT_TRUE(m["diagnostics"]["observables"][3]["mixing"]["rhat"].is_null());
  EXPECT_EQ(m["diagnostics"]["remarks"][0]["observable"], "county_splits");
  EXPECT_TRUE(m["diagnostics"]["failures"].empty());
}

// Internal consistency: the run dir form and the trace CSV form print the same table for the
// same draws (dropped records included), because both go through assess_convergence.
TEST(DiagnoseRunDirCli, TableEqualsTheTraceFormOnTheSameDrawsExportedAsLongCsv) {
  const test::ScratchDir scratch("planmill-diagnose-run-cli");
  const auto& dir = scratch.path;
  const auto run_dir = dir / "run";
  const auto run = test::write_mixed_run(
      run_dir, {.chains = 3, .ranks = 2, .segments = 2, .records_per_segment = 60});
  const auto csv_path = dir / "traces.csv";
  {
    std::ofstream csv(csv_path);
    csv << "chain,draw";
    for (const auto& name : run.state.observable_names) csv << ',' << name;
    csv << '\n';
    char number[40];
    for (const auto& [chain, rows] : run.observables) {
      for (std::size_t r = 0; r < rows.size(); ++r) {
        csv << "chain-" << chain << ',' << run.steps.at(chain)[r];
        for (const double v : rows[r]) {
          std::snprintf(number, sizeof number, "%.17g", v);
          csv << ',' << number;
        }
        csv << '\n';
      }
    }
  }
  for (const char* dropped : {"0", "11"}) {
    const std::string rule = std::string(" --drop-records ") + dropped + " --rhat-max 1.05 --ess-min 50";
    const auto from_run = run_planmill(dir, "diagnose " + quoted(run_dir) + rule);
    const auto from_csv = run_planmill(dir, "diagnose --traces " + quoted(csv_path) + rule);
    EXPECT_EQ(from_run.status, from_csv.status) << from_run.out << from_csv.out;
    const std::string table = test::table_of(from_run.out);
    EXPECT_FALSE(table.empty()) << from_run.out;
    EXPECT_EQ(table, test::table_of(from_csv.out)) << from_run.out << "\n" << from_csv.out;
  }
}

// A real run of a small invented state (planmill synth, 200 units, 4 districts, one rank), merged
// and diagnosed: the manifest agrees with the run's own reader and the input files on disk.
TEST(RealRun, MergeAndDiagnoseAgreeWithTheRunReader) {
  const test::ScratchDir scratch("planmill-merge-real-run");
  const auto& dir = scratch.path;
  ASSERT_EQ(
      run_planmill(dir, "synth --units 200 --districts 4 --seed 5 --out " + quoted(dir / "state"))
          .status,
      0);
  std::ofstream(dir / "state" / "job.toml", std::ios::app)
      << "[sampler]\nchains = 4\nsteps = 3000\nburn_in = 200\nrecord_every = 5\nseed = 3\n"
      << "[verdict]\nrhat_max = 1.05\ness_min = 50\n";
  const auto run = run_planmill(dir, "run " + quoted(dir / "state" / "job.toml") + " --output " +
                                         quoted(dir / "run") + " --quiet");
  ASSERT_EQ(run.status, 0) << run.out << run.err;

  auto o = run_planmill(dir, "merge " + quoted(dir / "run"));
  EXPECT_EQ(o.status, 0) << o.out << o.err;
  json m = json::parse(test::slurp(dir / "run" / "manifest.json"));
  const RunReader reader((dir / "run").string());
  std::uint64_t records = 0;
  for (const auto c : reader.chains()) records += reader.record_count(c);
  EXPECT_EQ(m["totals"]["records"], records);
  EXPECT_EQ(m["chains"].size(), 4U);
  EXPECT_TRUE(m["problems"].empty());
  EXPECT_EQ(m["job"]["copy_status"], "matches");
  EXPECT_EQ(m["observables"], reader.observable_names());
  EXPECT_EQ(m["diagnostics"]["draws_per_chain"], reader.record_count(0));
  EXPECT_EQ(m["diagnostics"]["rule"]["rhat_max"], 1.05);  // the job's [verdict]
  ASSERT_FALSE(m["inputs"].empty());
  for (const auto& input : m["inputs"]) EXPECT_EQ(input["status"], "matches") << input;

  // An input edited after the run is flagged; the merge itself still succeeds.
  std::ofstream(dir / "state" / "units.csv", std::ios::app) << "\n";
  o = run_planmill(dir, "merge " + quoted(dir / "run"));
  EXPECT_EQ(o.status, 0) << o.out << o.err;
  m = json::parse(test::slurp(dir / "run" / "manifest.json"));
  EXPECT_EQ(m["totals"]["inputs_not_matching"], 1U);
  EXPECT_NE(o.out.find("differ from the run's start"), std::string::npos) << o.out;

  // With no soft rules the energy is 0 for every plan: NaN with the reason, and not judged
  // (verdict.hpp), as it would be for the same draws given as a trace CSV.
  o = run_planmill(dir, "diagnose " + quoted(dir / "run"));
  EXPECT_NE(o.out.find("energy: not judged"), std::string::npos) << o.out;
  const auto energy = test::table_of(o.out).find("\nnot judged  energy ");
  ASSERT_NE(energy, std::string::npos) << o.out;
  EXPECT_NE(test::table_of(o.out).find("all draws are equal", energy), std::string::npos) << o.out;
}

}  // namespace
}  // namespace planmill
