// The ε-outlier section of planmill compare end to end: a flip run whose chains start at a plan,
// then compare with that plan (the test runs; its shares equal those counted here from the run's
// exported observables), with the plan relabelled (same result), with another plan, and on runs
// the theorem does not cover (random starts, recombination, a burn-in not recorded).
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

using test::split_csv_line;

class OutlierCli : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    dir_ = new fs::path(test::scratch_dir("planmill-outlier-cli", std::to_string(::getpid())));
    // A recombination run from random starts gives the plans to start from and compare with.
    const fs::path job = test::write_synth_job(*dir_ / "a", "chains = 1\nsteps = 60\nseed = 3");
    ASSERT_EQ(run(job, "a"), 0);
    ASSERT_EQ(bin(" export " + (*dir_ / "a" / "run").string() + " --out " + (*dir_ / "a" / "csv").string() +
                  " --plans 0:59,0:29"),
              0);
    // The flip run at the centre of the tests: both chains start at record 59's plan.
    const fs::path flip = started_job("flip", "kernel = \"flip\"\nchains = 2\nsteps = 200\nrecord_every = 2\nseed = 9");
    ASSERT_EQ(run(flip, "flip"), 0);
    ASSERT_EQ(bin(" export " + (*dir_ / "flip" / "run").string() + " --out " + (*dir_ / "flip" / "csv").string() +
                  " --plan-layout none"),
              0);
  }
  static void TearDownTestSuite() {
    fs::remove_all(*dir_);
    delete dir_;
  }
  static int bin(const std::string& args) {
    return test::shell(std::string(PLANMILL_BINARY) + args + " >" + (*dir_ / "log").string() + " 2>&1");
  }
  static int run(const fs::path& job, const std::string& name) {
    return bin(" run " + job.string() + " --output " + (*dir_ / name / "run").string() + " --quiet");
  }
  static fs::path plan(const std::string& record) {
    return *dir_ / "a" / "csv" / "plans" / ("chain-0-record-" + record + ".csv");
  }
  // A synth job in dir/name whose chains all start at `start` (plan("59")), with a declared tail.
  static fs::path started_job(const std::string& name, const std::string& sampler, fs::path start = {},
                              const std::string& starts = "given") {
    if (start.empty()) start = plan("59");
    const fs::path job = test::write_synth_job(*dir_ / name, sampler);
    std::string text = test::read_text(job);
    const std::string anchor = "[districts]\n";
    text.insert(text.find(anchor) + anchor.size(),
                "start = \"" + start.string() + "\"\nstarts = \"" + starts + "\"\n");
    text += "[compare]\ndeclared = [\"compactness.cut_edges:low\", \"compactness.polsby_popper_min\"]\n";
    std::ofstream(job) << text;
    return job;
  }
  // compare's exit status; its terminal text in out(), its JSON in json().
  static int compare(const std::string& name, const fs::path& plan_file) {
    return test::shell(std::string(PLANMILL_BINARY) + " compare " + (*dir_ / name / "run").string() + " " +
                       plan_file.string() + " --json " + (*dir_ / "c.json").string() + " --csv " +
                       (*dir_ / "c.csv").string() + " >" + (*dir_ / "out").string() + " 2>&1");
  }
  static std::string out() { return test::read_text(*dir_ / "out"); }
  static nlohmann::json json() { return nlohmann::json::parse(test::read_text(*dir_ / "c.json")); }
  static fs::path* dir_;
};
fs::path* OutlierCli::dir_ = nullptr;

TEST_F(OutlierCli, ChainsStartedAtThePlanGiveTheBoundsOfTheTheorem) {
  const int status = compare("flip", plan("59"));
  ASSERT_TRUE(status == 0 || status == 3) << out();
  const std::string text = out();
  EXPECT_NE(text.find("epsilon-outlier test (no mixing needed): 2 chain(s) started at the plan"), std::string::npos)
      << text;
  EXPECT_NE(text.find("null hypothesis: the compared plan is a draw from the chain's target law"), std::string::npos);
  const auto t = json()["outlier_test"];
  ASSERT_TRUE(t["ran"].get<bool>()) << t.dump(2);
  ASSERT_EQ(t["measures"].size(), 2u);
  const auto& cut = t["measures"][0];
  EXPECT_EQ(cut["name"], "compactness.cut_edges");
  EXPECT_EQ(cut["tail"], "low");
  EXPECT_EQ(t["measures"][1]["tail"], "two-sided");
  ASSERT_EQ(cut["chains"].size(), 2u);

  // Counted here from the run's exported observables (every record, 200 / 2 = 100 per chain),
  // independently of compare: eps_low = #{x_i <= x_0, i = 0..100} / 101, X0 the plan's value.
  std::ifstream in(*dir_ / "flip" / "csv" / "observables.csv");
  std::string line;
  std::getline(in, line);
  const auto header = split_csv_line(line);
  const std::size_t col =
      static_cast<std::size_t>(std::find(header.begin(), header.end(), "compactness.cut_edges") - header.begin());
  ASSERT_LT(col, header.size()) << line;
  const double x0 = cut["plan"].get<double>();
  std::vector<std::size_t> low(2, 1), high(2, 1), records(2, 0);
  while (std::getline(in, line)) {
    const auto cells = split_csv_line(line);
    const std::size_t chain = std::stoul(cells[0]);
    const double x = std::stod(cells[col]);
    ++records.at(chain);
    low[chain] += x <= x0 ? 1 : 0;
    high[chain] += x >= x0 ? 1 : 0;
  }
  double least = 1.0;
  for (std::size_t c = 0; c < 2; ++c) {
    const auto& got = cut["chains"][c];
    EXPECT_EQ(records[c], 100u);
    EXPECT_EQ(got["states"], 101);
    EXPECT_DOUBLE_EQ(got["eps_low"].get<double>(), low[c] / 101.0);
    EXPECT_DOUBLE_EQ(got["eps_high"].get<double>(), high[c] / 101.0);
    EXPECT_DOUBLE_EQ(got["p_bound"].get<double>(), std::min(1.0, std::sqrt(2.0 * low[c] / 101.0)));
    least = std::min(least, got["p_bound"].get<double>());
  }
  EXPECT_DOUBLE_EQ(cut["p_bound"].get<double>(), std::min(1.0, 2.0 * least));  // Bonferroni over 2 chains

  // The CSV carries the same rows: 2 per chain and one combined row per measure.
  std::ifstream table(*dir_ / "c.csv");
  std::size_t columns = 0, chain_rows = 0, combined_rows = 0;
  while (std::getline(table, line)) {
    if (line.rfind("#", 0) == 0) continue;
    if (columns == 0) {
      columns = split_csv_line(line).size();
      EXPECT_NE(line.find(",eps_low,eps_high,bound_low,bound_high,p_bound"), std::string::npos) << line;
      continue;
    }
    EXPECT_EQ(split_csv_line(line + "x").size(), columns) << line;
    chain_rows += line.rfind("outlier,", 0) == 0 ? 1 : 0;
    combined_rows += line.rfind("outlier_combined,", 0) == 0 ? 1 : 0;
  }
  EXPECT_EQ(chain_rows, 4u);
  EXPECT_EQ(combined_rows, 2u);
}

TEST_F(OutlierCli, ARelabelledPlanIsTheSameStart) {
  ASSERT_TRUE(compare("flip", plan("59")) != 2) << out();
  const auto before = json()["outlier_test"];
  // The same districts numbered 2, 3, 4, 1.
  std::ifstream in(plan("59"));
  std::ofstream relabelled(*dir_ / "relabelled.csv");
  std::string line;
  std::getline(in, line);
  relabelled << line << "\n";
  while (std::getline(in, line)) {
    const auto cells = split_csv_line(line);
    relabelled << cells[0] << "," << (std::stoi(cells[1]) % 4) + 1 << "\n";
  }
  relabelled.close();
  ASSERT_TRUE(compare("flip", *dir_ / "relabelled.csv") != 2) << out();
  EXPECT_EQ(json()["outlier_test"], before);
}

TEST_F(OutlierCli, AnotherPlanIsNotTested) {
  ASSERT_TRUE(compare("flip", plan("29")) != 2) << out();
  EXPECT_NE(out().find("epsilon-outlier test not run: the run's chains began at"), std::string::npos) << out();
  EXPECT_NE(out().find("which is another plan than the compared one; to run it, start the chains at the plan"),
            std::string::npos);
  EXPECT_FALSE(json()["outlier_test"]["ran"].get<bool>());
  EXPECT_NE(test::read_text(*dir_ / "c.csv").find("# epsilon-outlier test not run"), std::string::npos);
}

TEST_F(OutlierCli, RandomStartsAreNotTested) {
  ASSERT_TRUE(compare("a", plan("59")) != 2) << out();
  EXPECT_NE(out().find("epsilon-outlier test not run: the run's chains began at random seed plans"), std::string::npos)
      << out();
}

TEST_F(OutlierCli, RecombinationIsRefused) {
  const fs::path job = started_job("recom", "chains = 1\nsteps = 30\nseed = 2");
  ASSERT_EQ(run(job, "recom"), 0);
  ASSERT_TRUE(compare("recom", plan("59")) != 2) << out();
  EXPECT_NE(out().find("epsilon-outlier test not run: the run uses spanning-tree recombination, which is not known to "
                       "be reversible"),
            std::string::npos)
      << out();
  EXPECT_FALSE(json()["outlier_test"]["ran"].get<bool>());
}

TEST_F(OutlierCli, AnUnrecordedBurnInIsRefused) {
  const fs::path job = started_job("burn", "kernel = \"flip\"\nchains = 1\nsteps = 60\nburn_in = 10\nseed = 2");
  ASSERT_EQ(run(job, "burn"), 0);
  ASSERT_TRUE(compare("burn", plan("59")) != 2) << out();
  EXPECT_NE(out().find("the run did not record its first steps (burn_in = 10 steps"), std::string::npos) << out();
}

TEST_F(OutlierCli, MixedStartsTestChainZeroAlone) {
  // starts = "mixed": chain 0 begins at the plan, chain 1 at a random seed plan (docs/jobs.md).
  const fs::path job = started_job("mixed", "kernel = \"flip\"\nchains = 2\nsteps = 20\nseed = 2", {}, "mixed");
  ASSERT_EQ(run(job, "mixed"), 0);
  ASSERT_TRUE(compare("mixed", plan("59")) != 2) << out();
  const auto t = json()["outlier_test"];
  ASSERT_TRUE(t["ran"].get<bool>()) << out();
  ASSERT_EQ(t["measures"][0]["chains"].size(), 1u);
  EXPECT_EQ(t["measures"][0]["chains"][0]["chain"], "0");
  EXPECT_EQ(t["measures"][0]["chains"][0]["states"], 21);
}

TEST_F(OutlierCli, ATemperedRunIsRefused) {
  const fs::path job = started_job("tempered", "kernel = \"flip\"\nchains = 1\nsteps = 40\nseed = 2\n"
                                               "[tempering]\nrungs = 2\nhottest_beta = 0.2");
  ASSERT_EQ(run(job, "tempered"), 0);
  ASSERT_TRUE(compare("tempered", plan("59")) != 2) << out();
  EXPECT_NE(out().find("epsilon-outlier test not run: the run is tempered: the target rung's trajectory alone is not a "
                       "Markov chain"),
            std::string::npos)
      << out();
}

TEST_F(OutlierCli, AStartPlanChangedSinceTheRunIsNotTrusted) {
  const fs::path start = *dir_ / "start-copy.csv";
  fs::copy_file(plan("59"), start);
  const fs::path job = started_job("changed", "kernel = \"flip\"\nchains = 1\nsteps = 20\nseed = 2", start);
  ASSERT_EQ(run(job, "changed"), 0);
  ASSERT_TRUE(compare("changed", plan("59")) != 2) << out();
  EXPECT_TRUE(json()["outlier_test"]["ran"].get<bool>()) << out();
  fs::copy_file(plan("29"), start, fs::copy_options::overwrite_existing);
  ASSERT_TRUE(compare("changed", plan("59")) != 2) << out();
  EXPECT_NE(out().find("has changed since the run started"), std::string::npos) << out();
  EXPECT_FALSE(json()["outlier_test"]["ran"].get<bool>());
}

}  // namespace
}  // namespace planmill
