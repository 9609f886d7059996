// planmill score against an independent recomputation in Python (tests/score/score_reference.py,
// run with /usr/bin/python3: Debian python3-networkx and python3-numpy):
//  - a plan with a district above the population band and one not contiguous: the band in exact
//    rational arithmetic (fractions.Fraction), each district's population, and each district's
//    connected pieces by networkx.connected_components on the adjacency, and the counties split
//    against a county cap;
//  - a plan on fine units (each synth unit split in one to three) carried through a crosswalk: each
//    unit's district by the documented rule, the split units and their population, by numpy sums;
//    and compare given the same plan and crosswalk says it was carried and how many units split.
#include <gtest/gtest.h>

#include <fstream>
#include <nlohmann/json.hpp>
#include <string>

#include "command_output.hpp"
#include "run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

class ScoreReference : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    dir_ = new fs::path(test::scratch_dir("planmill-score-reference", std::to_string(::getpid())));
    job_ = new fs::path(test::run_and_export(*dir_, "chains = 2\nsteps = 100\nburn_in = 20\nseed = 9", "--plans 0:40"));
  }
  static void TearDownTestSuite() {
    fs::remove_all(*dir_);
    delete dir_;
    delete job_;
  }
  static std::string bin() { return PLANMILL_BINARY; }
  static std::string state() { return (*dir_ / "state").string(); }
  static std::string plan() { return (*dir_ / "csv" / "plans" / "chain-0-record-40.csv").string(); }
  static std::string python(const std::string& args) {
    return test::command_output("/usr/bin/python3 " + std::string(PLANMILL_SOURCE_DIR) +
                                "/tests/score/score_reference.py " + args + " 2>&1");
  }
  static fs::path* dir_;
  static fs::path* job_;
};
fs::path* ScoreReference::dir_ = nullptr;
fs::path* ScoreReference::job_ = nullptr;

TEST_F(ScoreReference, NamesTheDistrictOutsideTheBandAndTheOneNotContiguousWithTheirNumbers) {
  const std::string broken = (*dir_ / "broken.csv").string(), json = (*dir_ / "broken.json").string(),
                    out = (*dir_ / "broken.out").string();
  // The same job with a county cap of 1, which the broken plan (it splits more) exceeds.
  const fs::path capped = *dir_ / "state" / "capped.toml";
  std::string job_text = test::read_text(*job_);
  job_text.replace(job_text.find("[rules]\n"), 8, "[rules]\ncounty_splits_max = 1\n");
  std::ofstream(capped) << job_text;
  ASSERT_EQ(python("break " + state() + " " + plan() + " " + broken).rfind("ok", 0), 0u);
  EXPECT_EQ(test::shell(bin() + " score " + capped.string() + " " + broken + " --json " + json + " >" + out + " 2>&1"), 6)
      << test::read_text(out);
  const std::string check = python("rules " + state() + " " + capped.string() + " " + broken + " " + json);
  EXPECT_EQ(check.rfind("ok", 0), 0u) << check << test::read_text(out);
  const auto j = nlohmann::json::parse(test::read_text(json));
  const std::string text = test::read_text(out);
  EXPECT_NE(text.find("hard rules: the plan breaks "), std::string::npos) << text;
  for (const auto& b : j["hard_rules"]["population"])
    EXPECT_NE(text.find("district " + std::to_string(b["district"].get<int>()) + " has population " ), std::string::npos)
        << text;
  for (const auto& n : j["hard_rules"]["not_contiguous"])
    EXPECT_NE(text.find("district " + std::to_string(n["district"].get<int>()) + " is not contiguous: " +
                        std::to_string(n["pieces"].size()) + " pieces"),
              std::string::npos)
        << text;
  const std::size_t split = j["hard_rules"]["counties_split"];
  ASSERT_GT(split, 1u);
  EXPECT_NE(text.find(std::to_string(split) + " counties are split, the limit is 1 (" + std::to_string(split - 1) +
                      " over)"),
            std::string::npos)
      << text;
  // Still measured: the plan has the job's four districts.
  EXPECT_FALSE(j["scalars"].empty());
}

TEST_F(ScoreReference, ABlockLevelPlanIsCarriedOntoTheUnitsAsDocumented) {
  const std::string fine = (*dir_ / "fine.csv").string(), crosswalk = (*dir_ / "crosswalk.csv").string(),
                    json = (*dir_ / "fine.json").string(), out = (*dir_ / "fine.out").string();
  ASSERT_EQ(python("fine " + state() + " " + plan() + " " + fine + " " + crosswalk).rfind("ok", 0), 0u);
  const int status = test::shell(bin() + " score " + job_->string() + " " + fine + " --crosswalk " + crosswalk +
                                 " --json " + json + " >" + out + " 2>&1");
  EXPECT_TRUE(status == 0 || status == 6) << test::read_text(out);
  const std::string check = python("carry " + state() + " " + fine + " " + crosswalk + " " + json);
  EXPECT_EQ(check.rfind("ok", 0), 0u) << check;
  const auto j = nlohmann::json::parse(test::read_text(json));
  const std::size_t split = j["reading"]["split_units"].size();
  ASSERT_GT(split, 0u);
  const std::string text = test::read_text(out);
  EXPECT_NE(text.find("carried from "), std::string::npos) << text;
  EXPECT_NE(text.find("; " + std::to_string(split) + " units split, "), std::string::npos) << text;
  EXPECT_NE(text.find("warning: " + crosswalk + ": the fine units' populations of "), std::string::npos) << text;

  // compare carries the same plan the same way and says so.
  const std::string compared = (*dir_ / "compare.json").string();
  const int c = test::shell(bin() + " compare " + (*dir_ / "run").string() + " " + fine + " --crosswalk " + crosswalk +
                            " --json " + compared + " >" + out + " 2>&1");
  ASSERT_TRUE(c == 0 || c == 3) << test::read_text(out);
  const auto k = nlohmann::json::parse(test::read_text(compared));
  EXPECT_EQ(k["plan_reading"], j["reading"]["text"]);
  EXPECT_NE(test::read_text(out).find("plan: carried from "), std::string::npos) << test::read_text(out);
  for (std::size_t i = 0; i < j["scalars"].size(); ++i) {
    if (k["scalars"][i]["plan"].is_null()) continue;
    EXPECT_EQ(j["scalars"][i]["value"], k["scalars"][i]["plan"]) << j["scalars"][i]["name"];
  }
}

}  // namespace
}  // namespace planmill
