// planmill compare end to end: a small synth run, a plan exported from it, then the text, JSON
// and CSV outputs; a plan on other units is refused with exit 2.
#include <gtest/gtest.h>

#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

std::vector<std::string> split(const std::string& line, char sep = ',') {
  std::vector<std::string> cells;
  std::stringstream s(line);
  for (std::string cell; std::getline(s, cell, sep);) cells.push_back(cell);
  return cells;
}

class CompareCli : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    dir_ = new fs::path(test::scratch_dir("planmill-compare-cli", std::to_string(::getpid())));
    const fs::path job = test::write_synth_job(*dir_, "chains = 2\nsteps = 240\nburn_in = 20\nseed = 4");
    std::ofstream(job, std::ios::app) << "[compare]\ndeclared = [\"compactness.cut_edges\", \"compactness.polsby_popper_min\"]\n";
    ASSERT_EQ(test::shell(std::string(PLANMILL_BINARY) + " run " + job.string() + " --output " +
                          (*dir_ / "run").string() + " --quiet >/dev/null 2>&1"),
              0);
    ASSERT_EQ(test::shell(std::string(PLANMILL_BINARY) + " export " + (*dir_ / "run").string() + " --out " +
                          (*dir_ / "csv").string() + " --plans 1:37 >/dev/null 2>&1"),
              0);
  }
  static void TearDownTestSuite() {
    fs::remove_all(*dir_);
    delete dir_;
  }
  static int compare(const std::string& plan, const std::string& extra = {}) {
    return test::shell(std::string(PLANMILL_BINARY) + " compare " + (*dir_ / "run").string() + " " + plan + " " +
                       extra + " >" + (*dir_ / "out").string() + " 2>" + (*dir_ / "err").string());
  }
  static std::string out() { return test::read_text(*dir_ / "out"); }
  static std::string err() { return test::read_text(*dir_ / "err"); }
  // The exported observables row of chain 1, record 37, by column name.
  static std::string observed(const std::string& name) {
    std::ifstream in(*dir_ / "csv" / "observables.csv");
    std::string line;
    std::getline(in, line);
    const auto header = split(line);
    while (std::getline(in, line)) {
      const auto cells = split(line);
      if (cells[0] != "1" || cells[1] != "37") continue;
      for (std::size_t i = 0; i < header.size(); ++i)
        if (header[i] == name) return cells[i];
    }
    return {};
  }
  static fs::path* dir_;
};
fs::path* CompareCli::dir_ = nullptr;

TEST_F(CompareCli, APlanFromTheRunIsPlacedInItsEnsemble) {
  const std::string plan = (*dir_ / "csv" / "plans" / "chain-1-record-37.csv").string();
  const fs::path json = *dir_ / "c.json", csv = *dir_ / "c.csv";
  const int status = compare(plan, "--json " + json.string() + " --csv " + csv.string());
  // 240 records per chain are too few for the default verdict (and 2 chains rarely pass R-hat).
  EXPECT_TRUE(status == 0 || status == 3) << status << err();
  const std::string text = out();
  EXPECT_NE(text.find("2 chains (0: 220 records, 1: 220 records), 220 records used per chain"), std::string::npos)
      << text;
  EXPECT_NE(text.find("after the job's burn-in of 20 steps"), std::string::npos) << text;
  EXPECT_NE(text.find("verdict: "), std::string::npos) << text;
  if (status == 3) EXPECT_NE(text.find("WARNING: the ensemble has not passed"), std::string::npos) << text;
  // The run stores every measure the plan is given (observables and sorted vectors).
  EXPECT_EQ(text.find("not stored by the run, so not compared:"), std::string::npos) << text;
  EXPECT_NE(text.find("not a finding of intent"), std::string::npos) << text;
  EXPECT_NE(text.find("  compactness.cut_edges: the plan's value " + observed("compactness.cut_edges")),
            std::string::npos)
      << text;
  EXPECT_NE(text.find("  compactness.polsby_popper_min: the plan's value "), std::string::npos) << text;

  const auto j = nlohmann::json::parse(test::read_text(json));
  EXPECT_NE(j["caution"].get<std::string>().find("counsel"), std::string::npos);
  EXPECT_EQ(j["ensemble"]["records_used_per_chain"], 220);
  EXPECT_EQ(j["verdict"]["pass"], status == 0);
  EXPECT_EQ(j["declared"].size(), 2u);
  bool found = false;
  for (const auto& s : j["scalars"]) {
    // The run's own observables of the exported record are the plan's values: the plan is one of
    // the draws, so it ties with at least one.
    const std::string name = s["name"];
    const std::string want = observed(name);
    ASSERT_FALSE(want.empty()) << name;
    if (want == "NA") {  // not a number for this plan (e.g. declination when one party wins all)
      EXPECT_TRUE(s["plan"].is_null()) << name;
      continue;
    }
    EXPECT_DOUBLE_EQ(s["plan"].get<double>(), std::stod(want)) << name;
    EXPECT_GE(s["equal"].get<double>(), 1.0 / 440) << name;
    EXPECT_EQ(s["draws"], 440) << name;
    EXPECT_FALSE(s["beyond_every_draw"].get<bool>()) << name;
    found = found || name == "compactness.cut_edges";
  }
  EXPECT_TRUE(found);
  // Every sorted vector the run stores, k positions each; the plan is one of the draws.
  ASSERT_FALSE(j["sorted_vectors"].empty());
  std::size_t expected_rows = j["scalars"].size();
  for (const auto& v : j["sorted_vectors"]) {
    EXPECT_EQ(v["positions"].size(), 4u) << v["name"];  // write_synth_job: 4 districts
    expected_rows += 1 + v["positions"].size();
  }

  std::ifstream table(csv);
  std::string line;
  std::getline(table, line);
  EXPECT_EQ(line.rfind("# Caution:", 0), 0u) << line;
  std::getline(table, line);
  EXPECT_EQ(line, "# Filters (--keep): none");
  while (std::getline(table, line) && line.rfind("#", 0) == 0) {  // then the ε-outlier test's status
  }
  EXPECT_EQ(line.rfind("kind,measure,position,plan,below,equal,above,", 0), 0u) << line;
  const std::size_t columns = split(line).size();
  std::size_t rows = 0;
  while (std::getline(table, line)) {
    ++rows;
    const std::string kind = line.substr(0, line.find(','));
    EXPECT_TRUE(kind == "scalar" || kind == "overall" || kind == "position") << line;
    EXPECT_EQ(split(line + "x").size(), columns) << line;  // trailing empty cells count
  }
  EXPECT_EQ(rows, expected_rows);
}

TEST_F(CompareCli, APlanOnOtherUnitsIsRefusedWithExitTwo) {
  const fs::path plan = *dir_ / "other.csv";
  std::ofstream(plan) << "unit,district\nnowhere-1,1\nnowhere-2,2\n";
  EXPECT_EQ(compare(plan.string()), 2) << out() << err();
  EXPECT_NE(err().find(plan.string()), std::string::npos) << err();
  EXPECT_EQ(out().find("summary"), std::string::npos) << out();
}

TEST_F(CompareCli, AFolderThatIsNoRunIsRefused) {
  EXPECT_EQ(test::shell(std::string(PLANMILL_BINARY) + " compare " + (*dir_ / "csv").string() + " x.csv >/dev/null 2>&1"),
            2);
}

}  // namespace
}  // namespace planmill

namespace planmill {
namespace {

// A tempered run that records every rung: compare reads each chain's target rung only.
TEST(CompareCliTempered, UsesTheTargetRungOfEachLadder) {
  const fs::path dir = test::scratch_dir("planmill-compare-cli-rungs", std::to_string(::getpid()));
  const fs::path job = test::write_synth_job(
      dir,
      "kernel = \"flip\"\nchains = 2\nsteps = 300\nburn_in = 60\nrecord_every = 3\nseed = 8\n"
      "[tempering]\nrungs = 3\nhottest_beta = 0.2\nswap_every = 5\nrecord = \"all\"\n"
      "[rules.weights]\ncut_edges = 0.5");
  const std::string bin = PLANMILL_BINARY;
  ASSERT_EQ(test::shell(bin + " run " + job.string() + " --output " + (dir / "run").string() + " --quiet >/dev/null 2>&1"), 0);
  ASSERT_EQ(test::shell(bin + " export " + (dir / "run").string() + " --out " + (dir / "csv").string() +
                        " --plans 0:11 >/dev/null 2>&1"),
            0);
  const int status = test::shell(bin + " compare " + (dir / "run").string() + " " +
                                 (dir / "csv" / "plans" / "chain-0-record-11.csv").string() + " --json " +
                                 (dir / "c.json").string() + " >" + (dir / "out").string() + " 2>&1");
  EXPECT_TRUE(status == 0 || status == 3) << test::read_text(dir / "out");
  const auto j = nlohmann::json::parse(test::read_text(dir / "c.json"));
  // (300 - 60) / 3 = 80 records of the target rung per chain; the hotter rungs' 160 more per
  // chain are not among them.
  EXPECT_EQ(j["ensemble"]["records_used_per_chain"], 80);
  for (const auto& s : j["scalars"]) {
    EXPECT_EQ(s["draws"], 160) << s["name"];
    EXPECT_GE(s["equal"].get<double>(), 1.0 / 160) << s["name"];  // the plan is one of the draws
  }
  fs::remove_all(dir);
}

}  // namespace
}  // namespace planmill

namespace planmill {
namespace {

TEST(CompareCliVerdict, JudgesTheObservablesTheJobNamesAsDiagnoseDoes) {
  // A job whose [verdict] judges one observable: compare's verdict is diagnose's, word for word,
  // over that one observable (before, compare judged every observable whatever the job said).
  const fs::path dir = test::scratch_dir("planmill-compare-judge", std::to_string(::getpid()));
  const fs::path job = test::write_synth_job(dir, "chains = 2\nsteps = 240\nseed = 4");
  std::ofstream(job, std::ios::app) << "[verdict]\njudge = [\"compactness.cut_edges\"]\n";
  const std::string bin = PLANMILL_BINARY, run = (dir / "run").string();
  ASSERT_EQ(test::shell(bin + " run " + job.string() + " --output " + run + " --quiet >/dev/null 2>&1"), 0);
  ASSERT_EQ(test::shell(bin + " export " + run + " --out " + (dir / "csv").string() + " --plans 1:37 >/dev/null 2>&1"), 0);
  const int compared = test::shell(bin + " compare " + run + " " + (dir / "csv" / "plans" / "chain-1-record-37.csv").string() +
                                   " --json " + (dir / "c.json").string() + " >/dev/null 2>&1");
  ASSERT_TRUE(compared == 0 || compared == 3) << compared;
  const int diagnosed = test::shell(bin + " diagnose " + run + " >" + (dir / "d.txt").string() + " 2>/dev/null");
  ASSERT_TRUE(diagnosed == 0 || diagnosed == 3) << diagnosed;
  const auto c = nlohmann::json::parse(test::read_text(dir / "c.json"));
  const std::string text = c["verdict"]["text"];
  EXPECT_NE(text.find(" of 1 observables"), std::string::npos) << text;
  EXPECT_NE(test::read_text(dir / "d.txt").find(text), std::string::npos) << text;
  fs::remove_all(dir);
}

}  // namespace
}  // namespace planmill
