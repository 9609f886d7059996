// The manifest of a fixture run: every key against what the fixture wrote, input hashes against
// the run state, damaged files with the right chain and records, and the diagnostics section
// against diagnose_observable/judge on the same draws.
#include "planmill/manifest/manifest.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>

#include "manifest_support.hpp"
#include "planmill/base/error.hpp"
#include "planmill/diagnose/observable_diagnostics.hpp"
#include "planmill/io/file_hash.hpp"
#include "planmill/version.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using json = nlohmann::ordered_json;

struct Built {
  json manifest;
  std::vector<ChainProblem> problems, rung_problems;
  RunDiagnostics diagnostics;
};

Built merge(const fs::path& dir) {
  const RunReader reader(dir.string());
  Built b;
  b.problems = reader.verify();
  b.diagnostics = diagnose_run(reader, verdict_rule_of_run(reader).rule, {.problems = b.problems});
  b.rung_problems = reader.verify_rungs();
  b.manifest = build_manifest(reader, b.problems, b.rung_problems, b.diagnostics);
  return b;
}

// Adds inputs to a fixture's state: one unchanged, one edited after the start, one deleted.
void add_inputs(const fs::path& dir, test::FixtureRun& run) {
  std::ofstream(dir / "units.csv") << "unit,pop\na,1\n";
  std::ofstream(dir / "adjacency.csv") << "a,b\n";
  std::ofstream(dir / "plan.csv") << "unit,district\n";
  for (const auto* role : {"units", "adjacency", "start plan"}) {
    const std::string name = std::string(role) == "units"       ? "units.csv"
                             : std::string(role) == "adjacency" ? "adjacency.csv"
                                                                : "plan.csv";
    run.state.inputs.push_back(
        {role, (dir / name).string(), sha256_file_hex((dir / name).string())});
  }
  std::ofstream(dir / "adjacency.csv", std::ios::app) << "b,c\n";
  fs::remove(dir / "plan.csv");
  const std::string job = test::job_text_with_verdict("");
  std::ofstream(dir / "job.toml") << job;
  run.state.job_sha256 = sha256_hex(job);
  write_run_state(RunLayout{dir}, run.state);
}

TEST(Manifest, DescribesEveryChainPlanFileAndInputOfTheRun) {
  const test::ScratchDir scratch("planmill-manifest");
  const auto& dir = scratch.path;
  auto run = test::write_fixture_run(dir, {.chains = 3, .ranks = 2, .segments = 2});
  add_inputs(dir, run);
  const Built b = merge(dir);
  const json& m = b.manifest;
  EXPECT_TRUE(b.problems.empty());

  EXPECT_EQ(m["manifest_schema"], kManifestSchemaVersion);
  EXPECT_EQ(m["run_id"], "fixture-run");
  EXPECT_EQ(m["run_by"]["planmill_version"], run.state.planmill_version);
  EXPECT_EQ(m["merged_by"]["planmill_version"], kVersion);
  EXPECT_EQ(m["merged_by"]["git_commit"], kGitCommit);
  EXPECT_EQ(m["seed"], run.state.seed);
  EXPECT_EQ(m["observables"], run.state.observable_names);
  EXPECT_EQ(m["job"]["sha256"], run.state.job_sha256);
  EXPECT_EQ(m["job"]["copy_status"], "matches");

  ASSERT_EQ(m["inputs"].size(), 3U);
  EXPECT_EQ(m["inputs"][0]["status"], "matches");
  EXPECT_EQ(m["inputs"][0]["sha256_now"], m["inputs"][0]["sha256_at_start"]);
  EXPECT_EQ(m["inputs"][1]["status"], "differs");
  EXPECT_NE(m["inputs"][1]["sha256_now"], m["inputs"][1]["sha256_at_start"]);
  EXPECT_EQ(m["inputs"][2]["status"], "missing");
  EXPECT_TRUE(m["inputs"][2]["sha256_now"].is_null());
  EXPECT_EQ(m["totals"]["inputs_not_matching"], 2U);

  ASSERT_EQ(m["sessions"].size(), 1U);
  EXPECT_EQ(m["sessions"][0]["ranks"], 2);
  EXPECT_EQ(m["sessions"][0]["how_ended"], "finished");

  ASSERT_EQ(m["chains"].size(), 3U);
  std::uint64_t records = 0;
  for (std::size_t i = 0; i < 3; ++i) {
    const auto& c = m["chains"][i];
    const auto& s = run.state.chains[i];
    EXPECT_EQ(c["index"], s.index);
    EXPECT_EQ(c["records"], run.plans.at(s.index).size());
    EXPECT_EQ(c["steps"], run.steps.at(s.index).back());
    EXPECT_EQ(c["counters"]["accepted"], s.counters.accepted);
    EXPECT_DOUBLE_EQ(c["acceptance_rate"].get<double>(), static_cast<double>(s.counters.accepted) /
                                                             static_cast<double>(s.counters.steps));
    ASSERT_EQ(c["files"].size(), 2U);
    EXPECT_EQ(c["files"][1]["first_record"], 20U);
    EXPECT_EQ(c["files"][1]["file"], RunLayout::plan_file_name(1, static_cast<int>(s.index % 2)));
    records += c["records"].get<std::uint64_t>();
  }
  EXPECT_EQ(m["totals"]["records"], records);

  ASSERT_EQ(m["plan_files"].size(), run.state.files.size());
  std::uint64_t bytes = 0;
  for (const auto& f : m["plan_files"]) {
    const auto path = dir / f["file"].get<std::string>();
    EXPECT_EQ(f["size_bytes"], fs::file_size(path));
    EXPECT_EQ(f["verify"], "ok");
    EXPECT_TRUE(f["problems"].empty());
    bytes += fs::file_size(path);
    // Rank 0 of 2 holds chains 0 and 2, rank 1 chain 1, each 20 records per segment.
    const std::size_t expected_chains = f["rank"] == 0 ? 2 : 1;
    ASSERT_EQ(f["chains"].size(), expected_chains);
    EXPECT_EQ(f["chains"][0]["first_record"], f["segment"].get<std::uint64_t>() * 20);
    EXPECT_EQ(f["chains"][0]["last_record"], f["segment"].get<std::uint64_t>() * 20 + 19);
  }
  EXPECT_EQ(m["totals"]["plan_bytes"], bytes);
  EXPECT_EQ(m["diagnostics"]["draws_per_chain"], 40U);
}

TEST(Manifest, ADamagedPlanFileIsNamedWithItsChainAndRecords) {
  const test::ScratchDir scratch("planmill-manifest");
  const auto& dir = scratch.path;
  test::write_fixture_run(dir, {.chains = 2, .ranks = 2, .segments = 2});
  const std::string victim = RunLayout::plan_file_name(1, 1);  // chain 1, records 20..39
  fs::resize_file(dir / victim, 100);
  const Built b = merge(dir);
  const json& m = b.manifest;
  ASSERT_EQ(m["problems"].size(), 1U);
  EXPECT_EQ(m["problems"][0]["chain"], 1U);
  EXPECT_EQ(m["problems"][0]["first_record"], 20U);
  EXPECT_EQ(m["problems"][0]["last_record"], 39U);
  EXPECT_EQ(m["problems"][0]["file"], victim);
  for (const auto& f : m["plan_files"]) {
    EXPECT_EQ(f["verify"], f["file"] == victim ? "damaged" : "ok") << f["file"];
  }
  EXPECT_EQ(m["chains"][1]["problems"].size(), 1U);
  EXPECT_TRUE(m["chains"][0]["problems"].empty());
  // The damaged chain is left out of the diagnostics, which then cannot pass.
  const auto& d = m["diagnostics"];
  EXPECT_EQ(d["chains"], std::vector<std::string>{"0"});
  ASSERT_EQ(d["left_out"].size(), 1U);
  EXPECT_EQ(d["left_out"][0]["chain"], "1");
  EXPECT_EQ(d["verdict"], "fail");
}

// Chain c's observables as written by the fixture, records [from, from + n), column-major per
// observable as DrawMatrix wants them.
std::vector<double> column(const test::FixtureRun& run, std::size_t q, std::size_t from,
                           std::size_t n) {
  std::vector<double> out;
  for (const auto& [chain, rows] : run.observables) {
    for (std::size_t t = from; t < from + n; ++t) out.push_back(rows[t][q]);
  }
  return out;
}

// Equal numbers, or both NaN.
void expect_same(double ours, double expected, const std::string& what) {
  if (std::isnan(expected)) {
    EXPECT_TRUE(std::isnan(ours)) << what << ": " << ours;
  } else {
    EXPECT_DOUBLE_EQ(ours, expected) << what;
  }
}

TEST(RunDiagnostics, EqualsTheDiagnosticsOfTheSameDrawsAfterTheDroppedRecords) {
  const test::ScratchDir scratch("planmill-manifest");
  const auto& dir = scratch.path;
  const auto run = test::write_fixture_run(dir, {.chains = 3, .ranks = 2, .segments = 2});
  const RunReader reader(dir.string());
  const RunDiagnostics d = diagnose_run(reader, {1.05, 20.0}, {.dropped_records = 7});
  EXPECT_EQ(d.draws, 33U);
  EXPECT_TRUE(d.notes.empty());
  ASSERT_EQ(d.verdict().table.size(), 4U);
  for (const auto& row : d.verdict().table) {
    const std::size_t q = static_cast<std::size_t>(
        std::find(reader.observable_names().begin(), reader.observable_names().end(), row.name) -
        reader.observable_names().begin());
    const auto values = column(run, q, 7, 33);
    const auto expected = diagnose::diagnose_observable(row.name, {values, 33, 3});
    expect_same(row.rhat, expected.rhat, row.name + " rhat");
    expect_same(row.ess_bulk, expected.ess_bulk, row.name + " ess_bulk");
    expect_same(row.ess_tail, expected.ess_tail, row.name + " ess_tail");  // NaN for county_splits
    expect_same(row.mcse_mean, expected.mcse_mean, row.name + " mcse_mean");
    EXPECT_EQ(row.note, expected.note) << row.name;
  }
}

TEST(RunDiagnostics, ChainsOfUnequalLengthUseTheCommonPrefixAndSaySo) {
  const std::vector<std::string> names{"a", "b"};
  std::vector<diagnose::ChainRecords> chains(3);
  for (std::size_t c = 0; c < 3; ++c) {
    chains[c].chain = std::to_string(c);
    const std::size_t n = 50 + 10 * c;
    for (std::size_t t = 0; t < n; ++t) {
      chains[c].rows.push_back(std::sin(static_cast<double>(t * (c + 3))));
      chains[c].rows.push_back(static_cast<double>((t * 7 + c) % 5));
    }
  }
  const RunDiagnostics d = diagnose::assess_convergence({names, chains, {}, 0}, {});
  EXPECT_EQ(d.draws, 50U);
  EXPECT_EQ(d.records, (std::vector<std::size_t>{50, 60, 70}));
  ASSERT_EQ(d.notes.size(), 1U);
  EXPECT_NE(d.notes[0].find("common prefix of 50"), std::string::npos) << d.notes[0];
  std::vector<double> a;
  for (const auto& c : chains) {
    for (std::size_t t = 0; t < 50; ++t) a.push_back(c.rows[2 * t]);
  }
  const auto expected = diagnose::diagnose_observable("a", {a, 50, 3});
  const auto row = std::find_if(d.verdict().table.begin(), d.verdict().table.end(),
                                [](const auto& q) { return q.name == "a"; });
  ASSERT_NE(row, d.verdict().table.end());
  EXPECT_DOUBLE_EQ(row->rhat, expected.rhat);
  EXPECT_DOUBLE_EQ(row->ess_bulk, expected.ess_bulk);
}

TEST(RunDiagnostics, AConstantObservableIsNaNWithItsReasonAndNotJudgedAsTheTraceFormJudgesIt) {
  std::vector<diagnose::ChainRecords> chains(2);
  for (std::size_t c = 0; c < 2; ++c) {
    chains[c].chain = std::to_string(c);
    for (std::size_t t = 0; t < 100; ++t) {
      chains[c].rows.push_back(0.0);  // county_splits, always 0
      chains[c].rows.push_back(std::cos(static_cast<double>(t * t + 17 * c)));
    }
  }
  const diagnose::VerdictRule rule{1.5, 5.0};
  const RunDiagnostics d = diagnose::assess_convergence({{"county_splits", "energy"}, chains, {}, 0}, rule);
  const auto& constant = d.verdict().table.back();  // not judged: sorts last
  EXPECT_EQ(constant.name, "county_splits");
  EXPECT_TRUE(std::isnan(constant.rhat));
  EXPECT_EQ(constant.note, "all draws are equal");
  // One behaviour for both forms: the verdict is judge()'s on the same table.
  const auto expected = diagnose::judge(d.verdict().table, rule);
  EXPECT_EQ(d.verdict().pass, expected.pass);
  EXPECT_EQ(d.verdict().failures.size(), expected.failures.size());
  ASSERT_EQ(d.verdict().remarks.size(), 1U);
  EXPECT_EQ(d.verdict().remarks[0].name, "county_splits");
  const json j = diagnostics_to_json(d);
  EXPECT_EQ(j["observables"][1]["observable"], "county_splits");
  EXPECT_EQ(j["observables"][1]["judged"], "not judged");
  EXPECT_TRUE(j["observables"][1]["mixing"]["rhat"].is_null());
  EXPECT_EQ(j["observables"][1]["note"], "all draws are equal");
  EXPECT_EQ(j["remarks"][0]["observable"], "county_splits");
}

// Bad input in every form (run dir, trace file): dropping every record is an error naming the
// option, not an empty table.
TEST(RunDiagnostics, DroppingEveryRecordIsAnErrorNamingTheOption) {
  const test::ScratchDir scratch("planmill-manifest");
  const auto& dir = scratch.path;
  test::write_fixture_run(dir, {.chains = 2, .ranks = 1, .segments = 1});
  const RunReader reader(dir.string());
  EXPECT_EQ(diagnose_run(reader, {}, {.dropped_records = 19}).draws, 1U);
  try {
    (void)diagnose_run(reader, {}, {.dropped_records = 20});
    ADD_FAILURE() << "dropping all 20 records did not throw";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("--drop-records"), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("(20 records)"), std::string::npos) << e.what();
  }
}

TEST(VerdictRuleOfRun, ComesFromTheJobsVerdictSectionElseDefaults) {
  const test::ScratchDir scratch("planmill-manifest");
  const auto& dir = scratch.path;
  test::write_fixture_run(dir, {.chains = 2, .ranks = 1, .segments = 1});
  {
    const RunReader reader(dir.string());  // no job.toml: the plan file's job text, no [verdict]
    const auto r = verdict_rule_of_run(reader);
    EXPECT_EQ(r.rule.rhat_max, diagnose::VerdictRule{}.rhat_max);
    EXPECT_NE(r.source.find("defaults"), std::string::npos);
  }
  std::ofstream(dir / "job.toml") << test::job_text_with_verdict(
      "rhat_max = 1.05\ness_min = 123\n");
  const RunReader reader(dir.string());
  const auto r = verdict_rule_of_run(reader);
  EXPECT_EQ(r.rule.rhat_max, 1.05);
  EXPECT_EQ(r.rule.ess_min, 123.0);
  EXPECT_NE(r.source.find("job.toml"), std::string::npos);
  std::ofstream(dir / "job.toml") << test::job_text_with_verdict("rhat_max = 0.5\n");
  EXPECT_THROW((void)verdict_rule_of_run(reader), InputError);
}

TEST(Manifest, DiagnoseReplacesOnlyTheDiagnosticsSectionOfAnExistingManifest) {
  const test::ScratchDir scratch("planmill-manifest");
  const auto& dir = scratch.path;
  test::write_fixture_run(dir, {.chains = 2, .ranks = 1, .segments = 1});
  const RunReader reader(dir.string());
  const auto problems = reader.verify();
  // No manifest yet: the whole manifest is built.
  EXPECT_TRUE(write_manifest_diagnostics(reader, problems, diagnose_run(reader, {})));
  json m = json::parse(test::slurp(dir / "manifest.json"));
  EXPECT_EQ(m["diagnostics"]["dropped_records"], 0U);
  m["run_id"] = "kept";  // a mark to see that the rest is left alone
  write_manifest(RunLayout{dir}, m);
  EXPECT_FALSE(
      write_manifest_diagnostics(reader, problems, diagnose_run(reader, {}, {.dropped_records = 3})));
  m = json::parse(test::slurp(dir / "manifest.json"));
  EXPECT_EQ(m["run_id"], "kept");
  EXPECT_EQ(m["diagnostics"]["dropped_records"], 3U);
  EXPECT_EQ(m["diagnostics"]["draws_per_chain"], 17U);
  // A manifest that is not JSON is rebuilt whole.
  std::ofstream(dir / "manifest.json") << "{ half";
  EXPECT_TRUE(write_manifest_diagnostics(reader, problems, diagnose_run(reader, {})));
  EXPECT_EQ(json::parse(test::slurp(dir / "manifest.json"))["run_id"], "fixture-run");
  for (const auto& e : fs::directory_iterator(dir)) {
    EXPECT_EQ(e.path().filename().string().find(".tmp."), std::string::npos) << e.path();
  }
}

}  // namespace
}  // namespace planmill
