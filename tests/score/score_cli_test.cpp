// planmill score end to end, as a user runs it: a plan drawn by a run scores exit 0 with the same
// values compare gives it; bad plans and crosswalks are refused with exit 2, one line naming the
// file and line, and nothing written.
#include <gtest/gtest.h>

#include <algorithm>
#include <fstream>
#include <sstream>
#include <vector>
#include <nlohmann/json.hpp>
#include <string>

#include "run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

using test::split_csv_line;

class ScoreCli : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    dir_ = new fs::path(test::scratch_dir("planmill-score-cli", std::to_string(::getpid())));
    job_ = new fs::path(test::run_and_export(*dir_, "chains = 2\nsteps = 120\nburn_in = 20\nseed = 6", "--plans 1:50"));
  }
  static void TearDownTestSuite() {
    fs::remove_all(*dir_);
    delete dir_;
    delete job_;
  }
  static std::string bin() { return PLANMILL_BINARY; }
  static fs::path plan() { return *dir_ / "csv" / "plans" / "chain-1-record-50.csv"; }
  static int score(const std::string& plan_file, const std::string& extra = {}) {
    return test::shell(bin() + " score " + job_->string() + " " + plan_file + " " + extra + " >" +
                       (*dir_ / "out").string() + " 2>" + (*dir_ / "err").string());
  }
  static std::string out() { return test::read_text(*dir_ / "out"); }
  static std::string err() { return test::read_text(*dir_ / "err"); }
  // A scratch file with this text.
  static std::string file(const std::string& name, const std::string& text) {
    std::ofstream(*dir_ / name) << text;
    return (*dir_ / name).string();
  }
  static fs::path* dir_;
  static fs::path* job_;
};
fs::path* ScoreCli::dir_ = nullptr;
fs::path* ScoreCli::job_ = nullptr;

TEST_F(ScoreCli, APlanOfTheRunMeetsEveryRuleAndHasTheValuesCompareGivesIt) {
  const fs::path json = *dir_ / "score.json", compared = *dir_ / "compare.json";
  ASSERT_EQ(score(plan().string(), "--json " + json.string()), 0) << out() << err();
  EXPECT_NE(out().find("hard rules: the plan meets every one"), std::string::npos) << out();
  EXPECT_NE(out().find("read on the map's 200 units as given"), std::string::npos) << out();
  const int status = test::shell(bin() + " compare " + (*dir_ / "run").string() + " " + plan().string() +
                                 " --json " + compared.string() + " >/dev/null 2>&1");
  ASSERT_TRUE(status == 0 || status == 3) << status;
  const auto s = nlohmann::json::parse(test::read_text(json));
  const auto c = nlohmann::json::parse(test::read_text(compared));
  EXPECT_TRUE(s["hard_rules"]["meets_every_rule"].get<bool>());
  ASSERT_EQ(s["scalars"].size(), c["scalars"].size());
  for (std::size_t i = 0; i < s["scalars"].size(); ++i) {
    const auto& mine = s["scalars"][i];
    const auto& theirs = c["scalars"][i];
    ASSERT_EQ(mine["name"], theirs["name"]);
    if (theirs["plan"].is_null()) EXPECT_TRUE(mine["value"].is_null()) << mine["name"];
    else EXPECT_EQ(mine["value"].get<double>(), theirs["plan"].get<double>()) << mine["name"];
  }
  ASSERT_EQ(s["sorted_vectors"].size(), c["sorted_vectors"].size());
  for (std::size_t v = 0; v < s["sorted_vectors"].size(); ++v) {
    const auto& mine = s["sorted_vectors"][v];
    const auto& theirs = c["sorted_vectors"][v];
    ASSERT_EQ(mine["name"], theirs["name"]);
    ASSERT_EQ(mine["values"].size(), theirs["positions"].size());
    for (std::size_t i = 0; i < mine["values"].size(); ++i)
      EXPECT_EQ(mine["values"][i], theirs["positions"][i]["plan"]) << mine["name"] << " " << i;
  }
  // population_deviation and energy are among them (the runner's observables).
  EXPECT_NE(out().find("  population_deviation = "), std::string::npos) << out();
  EXPECT_NE(out().find("  energy = "), std::string::npos) << out();
}

TEST_F(ScoreCli, DistrictsBeyondTheJobsCountOrEmptyAreBrokenRules) {
  // The run's plan with its district 4 renumbered 5: district 4 is empty and 5 is beyond k = 4.
  std::ifstream in(plan());
  std::string line, text;
  std::getline(in, line);
  text = line + "\n";
  std::size_t moved = 0;
  while (std::getline(in, line)) {
    if (line.substr(line.rfind(',') + 1) == "4") {
      line = line.substr(0, line.rfind(',')) + ",5";
      ++moved;
    }
    text += line + "\n";
  }
  const fs::path json = *dir_ / "beyond.json";
  EXPECT_EQ(score(file("beyond.csv", text), "--json " + json.string()), 6) << out() << err();
  EXPECT_NE(out().find("district 4 has no units"), std::string::npos) << out();
  EXPECT_NE(out().find("district 5 is beyond the job's 4 districts: " + std::to_string(moved) + " units"),
            std::string::npos)
      << out();
  EXPECT_NE(out().find("its measures are not computed"), std::string::npos) << out();
  const auto j = nlohmann::json::parse(test::read_text(json));
  EXPECT_EQ(j["hard_rules"]["empty_districts"], nlohmann::json::array({4}));
  EXPECT_EQ(j["hard_rules"]["out_of_range"][0]["units"], moved);
}

// Each bad input: exit 2, one line on stderr naming the file (and line), no JSON written.
TEST_F(ScoreCli, BadPlansAndCrosswalksAreRefusedWithExitTwoAndWriteNothing) {
  const std::string plan_text = test::read_text(plan());
  const std::size_t first_row = plan_text.find('\n') + 1;
  const std::string first_id = plan_text.substr(first_row, plan_text.find(',', first_row) - first_row);
  // A crosswalk of one fine unit per unit, with the unit's population, built from the unit table.
  std::ifstream units(*dir_ / "state" / "units.csv");
  std::string line, crosswalk = "fine_unit,unit,population\n", fine_plan = "block,district\n";
  std::getline(units, line);
  const std::vector<std::string> header = split_csv_line(line);
  const std::size_t pop_column = std::find(header.begin(), header.end(), "pop") - header.begin();
  std::string second_id;
  while (std::getline(units, line)) {
    const std::vector<std::string> cells = split_csv_line(line);
    crosswalk += cells[0] + "-b," + cells[0] + "," + cells[pop_column] + "\n";
    if (second_id.empty() && cells[0] != first_id) second_id = cells[0];
  }
  std::stringstream rows(plan_text);
  std::getline(rows, line);
  while (std::getline(rows, line)) fine_plan += line.substr(0, line.find(',')) + "-b" + line.substr(line.find(',')) + "\n";
  const std::string good_crosswalk = file("good-crosswalk.csv", crosswalk);
  const std::string good_fine = file("good-fine.csv", fine_plan);
  const fs::path json = *dir_ / "refused.json";
  ASSERT_EQ(score(good_fine, "--crosswalk " + good_crosswalk), 0) << out() << err();
  EXPECT_NE(out().find("; 0 units split, 0 people in them"), std::string::npos) << out();

  struct Case {
    std::string what, plan, crosswalk, where;
  };
  const std::string extra_row = "nowhere-b,1\n";
  const std::string doubled = fine_plan + first_id + "-b,1\n";
  const std::size_t plan_rows = 201;  // header + 200 units
  const std::vector<Case> cases = {
      {"fine id not in the crosswalk", file("p1.csv", fine_plan + extra_row), good_crosswalk,
       (*dir_ / "p1.csv").string() + ":" + std::to_string(plan_rows + 1) + ":"},
      {"fine id twice in the plan", file("p2.csv", doubled), good_crosswalk,
       (*dir_ / "p2.csv").string() + ":" + std::to_string(plan_rows + 1) + ":"},
      {"fine id twice in the crosswalk", good_fine, file("w3.csv", crosswalk + first_id + "-b," + first_id + ",0\n"),
       (*dir_ / "w3.csv").string() + ":" + std::to_string(plan_rows + 1) + ":"},
      {"unknown map unit", good_fine, file("w4.csv", crosswalk + "extra-b,nowhere,0\n"),
       (*dir_ / "w4.csv").string() + ":" + std::to_string(plan_rows + 1) + ":"},
      {"a map unit with no fine unit", good_fine,
       file("w5.csv", crosswalk.substr(0, crosswalk.find('\n') + 1) +
                          crosswalk.substr(crosswalk.find('\n', crosswalk.find('\n') + 1) + 1)),
       (*dir_ / "w5.csv").string() + ": "},
      {"a population that is not whole", good_fine, file("w6.csv", crosswalk + "extra-b," + first_id + ",2.5\n"),
       (*dir_ / "w6.csv").string() + ":" + std::to_string(plan_rows + 1) + ":"},
      {"no population column", good_fine, file("w7.csv", "fine_unit,unit\nx,y\n"), (*dir_ / "w7.csv").string() + ":1:"},
      {"unit-level plan with an unknown unit", file("p8.csv", plan_text + "nowhere,1\n"), "",
       (*dir_ / "p8.csv").string() + ":" + std::to_string(plan_rows + 1) + ":"},
      {"a district that is no whole number", file("p9.csv", plan_text + second_id + ",x\n"), "",
       (*dir_ / "p9.csv").string() + ":" + std::to_string(plan_rows + 1) + ":"},
  };
  for (const Case& c : cases) {
    fs::remove(json);
    const std::string extra = (c.crosswalk.empty() ? "" : "--crosswalk " + c.crosswalk) + " --json " + json.string();
    EXPECT_EQ(score(c.plan, extra), 2) << c.what << "\n" << out() << err();
    const std::string message = err();
    EXPECT_EQ(message.rfind("planmill: error: " + c.where, 0), 0u) << c.what << ": " << message;
    EXPECT_EQ(std::count(message.begin(), message.end(), '\n'), 1) << c.what << ": " << message;
    EXPECT_TRUE(out().empty()) << c.what << ": " << out();
    EXPECT_FALSE(fs::exists(json)) << c.what;
  }
}

}  // namespace
}  // namespace planmill
