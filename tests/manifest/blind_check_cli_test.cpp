// The blind check of `planmill merge` as a user meets it: a real run of a job whose rules read no
// group or vote column draws the same plans on a map with those columns permuted, and the manifest
// says so; a job with a [[rules.group_share]] term is "not applicable", and forced through the
// check it "differed" (so the check can fail).
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <set>
#include <string>

#include "manifest_support.hpp"
#include "../support/run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using nlohmann::json;
using test::run_planmill;

std::string quoted(const fs::path& p) { return "'" + p.string() + "'"; }

// synth's 200-unit state, the job's [sampler] body and any extra sections, run on `ranks` ranks.
fs::path run_job(const fs::path& dir, const std::string& sampler, const std::string& extra = "",
                 int ranks = 1) {
  const fs::path job = test::write_synth_job(dir, sampler);
  if (!extra.empty()) std::ofstream(job, std::ios::app) << extra;
  const std::string mpi = ranks == 1 ? "" :
      "OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1 mpiexec -n " + std::to_string(ranks) + " ";
  const std::string run = mpi + "'" + PLANMILL_BINARY + "' run " + quoted(job) + " --output " +
                          quoted(dir / "run") + " --quiet > " + quoted(dir / "run.log") + " 2>&1";
  EXPECT_EQ(test::shell(run), 0) << test::slurp(dir / "run.log");
  return dir / "run";
}

json merged(const fs::path& dir, const fs::path& run, const std::string& options = "") {
  const auto o = run_planmill(dir, "merge " + quoted(run) + " " + options);
  EXPECT_EQ(o.status, 0) << o.out << o.err;
  EXPECT_NE(o.out.find("blind check: "), std::string::npos) << o.out;
  return json::parse(test::slurp(run / "manifest.json"));
}

TEST(BlindCheckCli, ABlindRunDrawsTheSamePlansWithGroupAndVoteColumnsPermuted) {
  const test::ScratchDir scratch("planmill-blind");
  const auto run = run_job(scratch.path, "chains = 4\nsteps = 80\nburn_in = 10\nrecord_every = 2\nseed = 11\n");
  const json m = merged(scratch.path, run);
  EXPECT_EQ(m["manifest_schema"], 3);
  const json& b = m["blind_check"];
  EXPECT_EQ(b["result"], "identical") << b.dump(2);
  EXPECT_EQ(b["applicable"], true);
  EXPECT_EQ(b["why"], nullptr);
  EXPECT_EQ(m["measures"]["rules_read_group_columns"], false);
  // Every group and vote column of the synth map, and nothing else (not pop, county or town).
  EXPECT_EQ(b["columns_permuted"], json({"grp", "gov_a", "gov_b", "sen_a", "sen_b"}));
  EXPECT_GT(b["permutation"]["units_with_changed_values"].get<int>(), 150);
  EXPECT_EQ(b["permutation"]["seed"], 11);
  ASSERT_EQ(b["stretches"].size(), 3U);  // the default
  std::set<int> chains;
  std::uint64_t steps = 0;
  for (const auto& s : b["stretches"]) {
    chains.insert(s["chain"].get<int>());
    EXPECT_EQ(s["result"], "identical");
    EXPECT_EQ(s["first_step"], 0);
    // Burn-in, then ten records two steps apart: the 10th record is at step 30.
    EXPECT_EQ(s["steps"], 30);
    EXPECT_EQ(s["records_compared"], 10);
    // About half of recombination's proposals are taken, so a record two steps on differs from the
    // one before with probability about 3/4; fewer than 3 changes in 10 has a chance below 1e-3.
    EXPECT_GE(s["records_changed"].get<int>(), 3) << "the plans compared must move";
    EXPECT_EQ(s["final_state_compared"], false);
    steps += s["steps"].get<std::uint64_t>();
  }
  EXPECT_EQ(chains.size(), 3U);
  EXPECT_EQ(b["steps_drawn"], steps);
  EXPECT_EQ(b["build_matches_run"], true);

  // The same rule from the same seed: the same chains and permutation on a second merge.
  const json again = merged(scratch.path, run);
  EXPECT_EQ(again["blind_check"]["stretches"], b["stretches"]);
  EXPECT_EQ(again["blind_check"]["permutation"], b["permutation"]);
}

TEST(BlindCheckCli, AStretchAsLongAsTheChainComparesItsExactFinalState) {
  const test::ScratchDir scratch("planmill-blind");
  const auto run = run_job(scratch.path, "chains = 2\nsteps = 40\nburn_in = 4\nrecord_every = 3\nseed = 3\n");
  const json b = merged(scratch.path, run, "--blind-stretches 5 --blind-records 1000")["blind_check"];
  EXPECT_EQ(b["result"], "identical") << b.dump(2);
  ASSERT_EQ(b["stretches"].size(), 2U);  // no more than the run's chains
  for (const auto& s : b["stretches"]) {
    EXPECT_EQ(s["steps"], 40);
    EXPECT_EQ(s["records_compared"], 12);  // steps 6, 9, ..., 39
    EXPECT_EQ(s["final_state_compared"], true);
  }
}

// Ladders spread over two ranks: their plans and their combined snapshots are drawn again whole.
TEST(BlindCheckCli, ATemperedBlindRunDrawsTheSamePlans) {
  const test::ScratchDir scratch("planmill-blind");
  const auto run = run_job(scratch.path,
                           "kernel = \"flip\"\nchains = 2\nsteps = 60\nburn_in = 20\nseed = 5\n",
                           "[tempering]\nrungs = 3\nhottest_beta = 0.2\nswap_every = 5\ntune = true\n", 2);
  const json b = merged(scratch.path, run, "--blind-records 1000")["blind_check"];
  EXPECT_EQ(b["result"], "identical") << b.dump(2);
  ASSERT_EQ(b["stretches"].size(), 2U);
  for (const auto& s : b["stretches"]) {
    EXPECT_EQ(s["records_compared"], 40);
    EXPECT_EQ(s["final_state_compared"], true);
    EXPECT_GT(s["records_changed"].get<int>(), 0);
  }
}

// A soft term on the group's share (flip: recombination takes no weight) near the state's mean
// share of 0.118: which proposals are accepted depends on where the group lives.
const char* kGroupShareRule =
    "[[rules.group_share]]\ngroup = \"grp\"\nthreshold = 0.12\nweight = 3.0\n";

TEST(BlindCheckCli, ARuleOnAGroupShareIsNotApplicableAndForcedThroughTheCheckItDiffers) {
  const test::ScratchDir scratch("planmill-blind");
  const auto run = run_job(scratch.path, "kernel = \"flip\"\nchains = 3\nsteps = 200\nburn_in = 0\nseed = 9\n",
                           kGroupShareRule);
  const json b = merged(scratch.path, run)["blind_check"];
  EXPECT_EQ(b["result"], "not applicable");
  EXPECT_EQ(b["applicable"], false);
  EXPECT_NE(b["why"].get<std::string>().find("rules.group_share"), std::string::npos) << b["why"];
  EXPECT_TRUE(b["stretches"].empty());

  const auto o = run_planmill(scratch.path, "merge " + quoted(run) + " --force-blind-check --blind-records 200");
  EXPECT_EQ(o.status, 0) << o.out << o.err;
  EXPECT_NE(o.out.find("blind check: differed"), std::string::npos) << o.out;
  const json forced = json::parse(test::slurp(run / "manifest.json"))["blind_check"];
  EXPECT_EQ(forced["result"], "differed") << forced.dump(2);
  EXPECT_EQ(forced["forced"], true);
  EXPECT_EQ(forced["applicable"], false);
  ASSERT_FALSE(forced["differed_at"].is_null());
  // differed_at names the first stretch, in the order drawn, that differed.
  bool some = false;
  for (const auto& s : forced["stretches"]) {
    if (s["result"] != "differed") continue;
    if (!some) {
      EXPECT_EQ(s["chain"], forced["differed_at"]["chain"]);
      EXPECT_EQ(s["differed_at_step"], forced["differed_at"]["step"]);
    }
    some = true;
    EXPECT_GT(s["units_differing"].get<int>(), 0);
    // The steps before the difference were drawn identically; the control on the map as it is
    // reproduced the stored plans past it (else the result would be "not reproduced").
    EXPECT_EQ(s["records_compared"], s["differed_at_record"].get<int>() + 1);
  }
  EXPECT_TRUE(some);
}

// A committed snapshot that its chain's records do not lead to (here: edited by hand) differs on
// the permuted map and on the map as it is alike: the check blames the redraw, not the columns.
TEST(BlindCheckCli, AFinalStateThatTheMapAsItIsDoesNotReproduceIsNotReproduced) {
  const test::ScratchDir scratch("planmill-blind");
  const auto run = run_job(scratch.path, "chains = 1\nsteps = 20\nburn_in = 0\nseed = 2\n");
  json state = json::parse(test::slurp(run / "run-state.json"));
  state["chains"][0]["snapshot"] = state["chains"][0]["snapshot"].get<std::string>() + "0\n";
  std::ofstream(run / "run-state.json") << state.dump(2);
  const json b = merged(scratch.path, run, "--blind-records 100")["blind_check"];
  EXPECT_EQ(b["result"], "not reproduced") << b.dump(2);
  EXPECT_NE(b["why"].get<std::string>().find("even on the map as it is"), std::string::npos) << b["why"];
  ASSERT_EQ(b["stretches"].size(), 1U);
  EXPECT_EQ(b["stretches"][0]["records_compared"], 20);  // every record matched; the final state did not
  EXPECT_EQ(b["stretches"][0]["final_state_compared"], true);
  EXPECT_EQ(b["stretches"][0]["differed_at_record"], nullptr);
  EXPECT_EQ(b["steps_drawn"], 40);  // the stretch and its control
}

TEST(BlindCheckCli, NoStretchesIsNotCheckedAndABadCountIsOneLineExitTwo) {
  const test::ScratchDir scratch("planmill-blind");
  const auto run = run_job(scratch.path, "chains = 2\nsteps = 20\nburn_in = 0\nseed = 2\n");
  const json b = merged(scratch.path, run, "--blind-stretches 0")["blind_check"];
  EXPECT_EQ(b["result"], "not checked");
  EXPECT_EQ(b["why"], "--blind-stretches 0");
  const auto o = run_planmill(scratch.path, "merge " + quoted(run) + " --blind-records 0");
  EXPECT_EQ(o.status, 2) << o.out << o.err;
  EXPECT_NE(o.err.find("--blind-records"), std::string::npos) << o.err;
}

TEST(BlindCheckCli, AMapChangedSinceTheRunIsNotChecked) {
  const test::ScratchDir scratch("planmill-blind");
  const auto run = run_job(scratch.path, "chains = 2\nsteps = 20\nburn_in = 0\nseed = 2\n");
  std::ofstream(scratch.path / "state" / "units.csv", std::ios::app) << "\n";
  const json b = merged(scratch.path, run)["blind_check"];
  EXPECT_EQ(b["result"], "not checked");
  EXPECT_NE(b["why"].get<std::string>().find("has changed since the run started"), std::string::npos) << b["why"];
}

}  // namespace
}  // namespace planmill
