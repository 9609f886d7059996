// The manifest of a run whose ladders recorded every rung ([tempering] record = "all"): the rung
// count per chain, hot-rung damage listed apart from the ensemble's, counted in the totals and
// in merge's exit status, and never part of the diagnostics (rung 0 only).
#include <gtest/gtest.h>

#include <filesystem>
#include <nlohmann/json.hpp>

#include "manifest_support.hpp"
#include "planmill/manifest/manifest.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using json = nlohmann::ordered_json;

json merged(const fs::path& dir) {
  const RunReader reader(dir.string());
  const auto problems = reader.verify();
  const auto diagnostics =
      diagnose_run(reader, verdict_rule_of_run(reader).rule, {.problems = problems});
  return build_manifest(reader, problems, reader.verify_rungs(), diagnostics);
}

// Chains 0 and 2 on rank 0, chain 1 on rank 1; 2 segments of 20 records.
constexpr test::FixtureRunOptions kLadders = {.chains = 3, .ranks = 2, .recorded_rungs = 3};

// The diagnostics section without its time stamp.
json diagnostics_of(json m) {
  json d = m["diagnostics"];
  d.erase("computed");
  return d;
}

TEST(ManifestRungs, ARunThatRecordedEveryRungSaysSoPerChain) {
  const test::ScratchDir scratch("planmill-manifest-rungs");
  test::write_fixture_run(scratch.path / "ladders", kLadders);
  test::FixtureRunOptions target_only = kLadders;
  target_only.recorded_rungs = 1;
  test::write_fixture_run(scratch.path / "target", target_only);
  const json m = merged(scratch.path / "ladders");
  const json plain = merged(scratch.path / "target");
  for (std::size_t i = 0; i < 3; ++i) {
    EXPECT_EQ(m["chains"][i]["recorded_rungs"], 3U);
    EXPECT_TRUE(m["chains"][i]["rung_problems"].empty());
    EXPECT_FALSE(plain["chains"][i].contains("recorded_rungs"));  // as before record = "all"
    EXPECT_FALSE(plain["chains"][i].contains("rung_problems"));
  }
  EXPECT_TRUE(m["rung_problems"].empty());
  EXPECT_EQ(m["totals"]["rung_problems"], 0U);
  EXPECT_EQ(m["totals"]["records"], plain["totals"]["records"]);  // records count rung 0 only
  // The fixture draws rung 0 the same with or without hot rungs, so the diagnostics, made from
  // rung 0 only, are the same number for number.
  EXPECT_EQ(diagnostics_of(m), diagnostics_of(plain));
}

TEST(ManifestRungs, HotRungDamageIsListedApartAndLeavesTheEnsembleAlone) {
  const test::ScratchDir scratch("planmill-manifest-rungs");
  const auto dir = scratch.path / "run";
  test::write_fixture_run(dir, kLadders);
  const json intact = merged(dir);
  const std::string victim = RunLayout::plan_file_name(1, 1);  // chain 1, records 20..39
  ASSERT_TRUE(test::damage_chunk(dir / victim, rung_record_index(1, 2), "observables"));
  const json m = merged(dir);

  EXPECT_TRUE(m["problems"].empty());
  EXPECT_EQ(m["totals"]["problems"], 0U);
  ASSERT_EQ(m["rung_problems"].size(), 1U) << m["rung_problems"].dump(1);
  const json& p = m["rung_problems"][0];
  EXPECT_EQ(p["chain"], 1U);
  EXPECT_EQ(p["rung"], 2U);
  EXPECT_EQ(p["first_record"], 20U);
  EXPECT_EQ(p["last_record"], 39U);
  EXPECT_EQ(p["file"], victim);
  EXPECT_EQ(m["totals"]["rung_problems"], 1U);
  EXPECT_EQ(m["chains"][1]["rung_problems"], json::array({p}));
  EXPECT_TRUE(m["chains"][1]["problems"].empty());
  EXPECT_TRUE(m["chains"][0]["rung_problems"].empty());
  for (const auto& f : m["plan_files"]) {
    EXPECT_EQ(f["verify"], f["file"] == victim ? "damaged" : "ok") << f["file"];
    EXPECT_EQ(f["rung_problems"].size(), f["file"] == victim ? 1U : 0U) << f["file"];
    EXPECT_TRUE(f["problems"].empty());
  }
  // Chain 1 stays in the diagnostics, which are those of the intact run.
  EXPECT_TRUE(m["diagnostics"]["left_out"].empty());
  EXPECT_EQ(diagnostics_of(m), diagnostics_of(intact));
}

TEST(ManifestRungs, ATruncatedFileIsListedForTheChainAndForEachHotRung) {
  const test::ScratchDir scratch("planmill-manifest-rungs");
  const auto dir = scratch.path / "run";
  test::write_fixture_run(dir, kLadders);
  fs::resize_file(dir / RunLayout::plan_file_name(1, 1), 100);
  const json m = merged(dir);
  ASSERT_EQ(m["problems"].size(), 1U);
  ASSERT_EQ(m["rung_problems"].size(), 2U);
  EXPECT_EQ(m["rung_problems"][0]["rung"], 1U);
  EXPECT_EQ(m["rung_problems"][1]["rung"], 2U);
  EXPECT_EQ(m["chains"][1]["rung_problems"].size(), 2U);
  EXPECT_EQ(m["diagnostics"]["left_out"][0]["chain"], "1");  // the ensemble's damage, as before
}

TEST(ManifestRungs, MergeExitsThreeOnHotRungDamageAndDiagnoseIgnoresIt) {
  const test::ScratchDir scratch("planmill-manifest-rungs");
  const auto dir = scratch.path / "run";
  test::write_fixture_run(dir, kLadders);
  const std::string run = "'" + dir.string() + "'";
  EXPECT_EQ(test::run_planmill(scratch.path, "merge " + run).status, 0);
  ASSERT_TRUE(test::damage_chunk(dir / RunLayout::plan_file_name(0, 0), rung_record_index(2, 1),
                                 "observables"));
  const auto o = test::run_planmill(scratch.path, "merge " + run);
  EXPECT_EQ(o.status, 3) << o.out << o.err;
  EXPECT_NE(o.err.find("chain 2 rung 1, records 0..19"), std::string::npos) << o.err;
  const json m = json::parse(test::slurp(dir / "manifest.json"));
  EXPECT_EQ(m["totals"]["rung_problems"], 1U);

  // diagnose judges rung 0 only; a manifest it builds anew still lists the hot-rung damage.
  fs::remove(dir / "manifest.json");
  const auto d = test::run_planmill(scratch.path, "diagnose " + run);
  const json fresh = json::parse(test::slurp(dir / "manifest.json"));
  EXPECT_EQ(fresh["rung_problems"].size(), 1U);
  EXPECT_TRUE(fresh["diagnostics"]["left_out"].empty()) << d.out << d.err;
}

}  // namespace
}  // namespace planmill
