// Starting from a given plan, as analysts start from an enacted one: a plan that planmill itself
// exported becomes districts.start, and `planmill run` under mpiexec runs from it with every kernel,
// on 1 and 2 ranks (this crashed once, when a plan outlived the map it pointed at).
#include <gtest/gtest.h>

#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "planmill/run/run_reader.hpp"
#include "../support/run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using test::shell;

std::string read_text(const fs::path& path) {
  std::ifstream in(path);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

int run(int ranks, const fs::path& job, const fs::path& out, const fs::path& log) {
  setenv("OMPI_ALLOW_RUN_AS_ROOT", "1", 1);
  setenv("OMPI_ALLOW_RUN_AS_ROOT_CONFIRM", "1", 1);
  return shell("timeout 120 mpiexec --oversubscribe -n " + std::to_string(ranks) + " " + PLANMILL_BINARY +
               " run " + job.string() + " --output " + out.string() + " --quiet >" + log.string() + " 2>&1");
}

// The job's [sampler] body replaced, districts.start pointing at `plan` and districts.starts set
// to `starts` (left out when empty).
void rewrite_job(const fs::path& job, const std::string& sampler, const fs::path& plan,
                 const std::string& starts = "given", const std::string& more_districts = "") {
  std::string text = read_text(job);
  text = text.substr(0, text.find("[sampler]"));
  const std::string count_line = "count = 4\n";
  const auto at = text.find(count_line);
  ASSERT_NE(at, std::string::npos);
  text = text.substr(0, at + count_line.size()) + "start = \"" + plan.string() + "\"\n" +
         (starts.empty() ? "" : "starts = \"" + starts + "\"\n") + more_districts + text.substr(text.find("[rules]"));
  std::ofstream(job, std::ios::trunc) << text << "[sampler]\n" << sampler << "\n";
}

// unit id -> district label (0-based), in the map's unit order, from an exported plan file.
std::vector<DistrictIndex> labels_in_file(const fs::path& plan, const fs::path& units) {
  std::vector<std::string> order;
  std::istringstream u(read_text(units));
  std::string line;
  std::getline(u, line);
  while (std::getline(u, line)) order.push_back(line.substr(0, line.find(',')));
  std::istringstream p(read_text(plan));
  std::getline(p, line);
  std::vector<std::pair<std::string, int>> rows;
  while (std::getline(p, line)) rows.emplace_back(line.substr(0, line.find(',')), std::stoi(line.substr(line.find(',') + 1)));
  std::vector<DistrictIndex> labels;
  for (const std::string& id : order)
    for (const auto& [rid, d] : rows)
      if (rid == id) labels.push_back(static_cast<DistrictIndex>(d - 1));
  return labels;
}

class StartPlan : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_ = test::scratch_dir("planmill-start-test", ::testing::UnitTest::GetInstance()->current_test_info()->name());
    job_ = test::write_synth_job(dir_, "kernel = \"recombination\"\nchains = 2\nsteps = 20\nseed = 3\n");
    ASSERT_EQ(run(1, job_, dir_ / "first", dir_ / "first.log"), 0) << read_text(dir_ / "first.log");
    ASSERT_EQ(shell(std::string(PLANMILL_BINARY) + " export " + (dir_ / "first").string() + " --out " +
                    (dir_ / "exported").string() + " --plans 1:7 >/dev/null"),
              0);
    plan_ = dir_ / "exported" / "plans" / "chain-1-record-7.csv";
    ASSERT_TRUE(fs::exists(plan_));
  }
  fs::path dir_, job_, plan_;
};

TEST_F(StartPlan, EveryKernelRunsFromAnExportedPlanOnOneAndTwoRanks) {
  for (const std::string kernel : {"recombination", "merge-split", "flip"}) {
    for (const int ranks : {1, 2}) {
      SCOPED_TRACE(kernel + " on " + std::to_string(ranks) + " rank(s)");
      rewrite_job(job_, "kernel = \"" + kernel + "\"\nchains = 2\nsteps = 30\nseed = 4\n", plan_);
      ASSERT_EQ(shell(std::string(PLANMILL_BINARY) + " check " + job_.string() + " >/dev/null 2>&1"), 0);
      const fs::path out = dir_ / (kernel + "-" + std::to_string(ranks));
      const fs::path log = dir_ / (kernel + "-" + std::to_string(ranks) + ".log");
      ASSERT_EQ(run(ranks, job_, out, log), 0) << read_text(log);
      RunReader reader(out.string());
      EXPECT_EQ(reader.record_count(0), 30U);
      EXPECT_EQ(reader.record_count(1), 30U);
    }
  }
}

// A flip step moves at most one unit, so a chain whose first record is the given plan or one unit
// away from it started there; one far from it started from a random seed plan.
void expect_starts(const fs::path& job, const fs::path& plan, const fs::path& run_dir,
                   const std::vector<bool>& from_given) {
  const std::vector<DistrictIndex> given = labels_in_file(plan, job.parent_path() / "units.csv");
  ASSERT_EQ(given.size(), 200U);
  RunReader reader(run_dir.string());
  for (std::uint64_t chain = 0; chain < from_given.size(); ++chain) {
    std::size_t differing = 999;
    reader.for_each_plan(chain, 0, 0, [&](std::uint64_t, std::span<const DistrictIndex> labels) {
      differing = 0;
      for (std::size_t u = 0; u < labels.size(); ++u) differing += labels[u] != given[u] ? 1 : 0;
    });
    if (from_given[chain]) {
      EXPECT_LE(differing, 1U) << "chain " << chain << " should start from the given plan";
    } else {
      EXPECT_GT(differing, 10U) << "chain " << chain << " should start from a random seed plan";
    }
  }
}

TEST_F(StartPlan, ChainsStartFromTheGivenPlanOrFromRandomSeedPlansAsTheJobSays) {
  const std::string sampler = "kernel = \"flip\"\nchains = 3\nsteps = 5\nseed = 4\n";
  rewrite_job(job_, sampler, plan_, "given");
  ASSERT_EQ(run(2, job_, dir_ / "given", dir_ / "given.log"), 0) << read_text(dir_ / "given.log");
  expect_starts(job_, plan_, dir_ / "given", {true, true, true});
  rewrite_job(job_, sampler, plan_, "");  // the default: "mixed"
  ASSERT_EQ(run(2, job_, dir_ / "mixed", dir_ / "mixed.log"), 0) << read_text(dir_ / "mixed.log");
  expect_starts(job_, plan_, dir_ / "mixed", {true, false, false});
  EXPECT_EQ(read_text(dir_ / "mixed.log").find("every chain starts from"), std::string::npos);
  rewrite_job(job_, sampler, plan_, "random");
  ASSERT_EQ(run(2, job_, dir_ / "random", dir_ / "random.log"), 0) << read_text(dir_ / "random.log");
  expect_starts(job_, plan_, dir_ / "random", {false, false, false});
}

// R-hat compares chains, so chains that all began at one plan can agree while none left it: the
// verdict of such a run says so, and a run from random seed plans does not carry the caution.
TEST_F(StartPlan, DiagnoseCautionsWhenEveryChainStartedFromOnePlan) {
  const std::string caution = "every chain started from the same given plan";
  const auto diagnose = [&](const fs::path& run_dir) {
    const fs::path log = dir_ / "diagnose.log";
    (void)shell(std::string(PLANMILL_BINARY) + " diagnose " + run_dir.string() + " >" + log.string() + " 2>&1");
    return read_text(log);
  };
  EXPECT_EQ(diagnose(dir_ / "first").find(caution), std::string::npos);
  rewrite_job(job_, "kernel = \"recombination\"\nchains = 2\nsteps = 20\nseed = 4\n", plan_);
  ASSERT_EQ(run(1, job_, dir_ / "given", dir_ / "given.log"), 0) << read_text(dir_ / "given.log");
  EXPECT_NE(read_text(dir_ / "given.log").find("every chain starts from"), std::string::npos);
  EXPECT_NE(diagnose(dir_ / "given").find(caution), std::string::npos);
  rewrite_job(job_, "kernel = \"recombination\"\nchains = 2\nsteps = 20\nseed = 4\n", plan_, "mixed");
  ASSERT_EQ(run(1, job_, dir_ / "mixed", dir_ / "mixed.log"), 0) << read_text(dir_ / "mixed.log");
  EXPECT_EQ(diagnose(dir_ / "mixed").find(caution), std::string::npos);
}

// districts.frozen: the frozen district's units keep their district in every recorded plan of
// every chain, while the other districts do change; without starts = "given" the job is refused.
TEST_F(StartPlan, FrozenDistrictsNeverChangeInAnyRecordedPlan) {
  const std::vector<DistrictIndex> given = labels_in_file(plan_, job_.parent_path() / "units.csv");
  ASSERT_EQ(given.size(), 200U);
  for (const std::string kernel : {"recombination", "merge-split", "flip"}) {
    SCOPED_TRACE(kernel);
    rewrite_job(job_, "kernel = \"" + kernel + "\"\nchains = 2\nsteps = 300\nseed = 5\n", plan_, "given",
                "frozen = [2]\n");
    const fs::path out = dir_ / ("frozen-" + kernel), log = dir_ / ("frozen-" + kernel + ".log");
    ASSERT_EQ(run(2, job_, out, log), 0) << read_text(log);
    RunReader reader(out.string());
    std::size_t plans = 0, moved = 0, broken = 0;
    for (std::uint64_t chain = 0; chain < 2; ++chain)
      reader.for_each_plan(chain, 0, reader.record_count(chain) - 1,
                           [&](std::uint64_t, std::span<const DistrictIndex> labels) {
                             ++plans;
                             bool changed = false;
                             for (std::size_t u = 0; u < labels.size(); ++u) {
                               if ((given[u] == 1) != (labels[u] == 1)) ++broken;
                               changed = changed || labels[u] != given[u];
                             }
                             moved += changed;
                           });
    EXPECT_EQ(plans, 600U);
    EXPECT_EQ(broken, 0U) << "units entered or left the frozen district";
    EXPECT_GT(moved, 0U) << "the other districts never moved: the test would prove nothing";
  }
  rewrite_job(job_, "kernel = \"flip\"\nchains = 2\nsteps = 10\n", plan_, "mixed", "frozen = [2]\n");
  const fs::path log = dir_ / "frozen-mixed.log";
  EXPECT_EQ(shell(std::string(PLANMILL_BINARY) + " check " + job_.string() + " >" + log.string() + " 2>&1"), 2);
  EXPECT_NE(read_text(log).find("districts.frozen"), std::string::npos) << read_text(log);
}

}  // namespace
}  // namespace planmill
