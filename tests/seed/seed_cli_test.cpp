// First plans under county caps, the way a user meets them: `planmill synth` writes a 30-district
// state, the job gets rules.county_splits_max, and `planmill run` must either find a first plan
// that meets the cap or say which rule it could not meet and how close it came (a county cap once
// failed with a message that blamed the population band).
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <map>
#include <regex>
#include <set>
#include <sstream>
#include <string>

#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/rules/rules.hpp"
#include "../support/run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using test::read_text;
using test::shell;

// synth's state of `units` units and 30 districts, with the cap and a short merge-split run.
fs::path capped_job(const fs::path& dir, std::size_t units, int cap) {
  const std::string synth = std::string(PLANMILL_BINARY) + " synth --units " + std::to_string(units) +
                            " --districts 30 --seed 3 --out " + (dir / "state").string() + " >/dev/null";
  EXPECT_EQ(shell(synth), 0);
  const fs::path job = dir / "state" / "job.toml";
  std::string text = read_text(job);
  const auto rules = text.find("[rules]\n");
  EXPECT_NE(rules, std::string::npos) << text;
  text.insert(rules + 8, "county_splits_max = " + std::to_string(cap) + "\n");
  std::ofstream(job, std::ios::trunc) << text << "[sampler]\nkernel = \"recombination\"\nchains = 1\nsteps = 20\n";
  return job;
}

int run(const fs::path& job, const fs::path& dir) {
  return shell(std::string(PLANMILL_BINARY) + " run " + job.string() + " --output " + (dir / "run").string() +
               " --quiet >" + (dir / "log").string() + " 2>&1");
}

TEST(SeedCli, ACountyCapBelowTheDistrictCountFindsAFirstPlan) {
  const fs::path dir = test::scratch_dir("planmill_seed_cli", "cap");
  // 2000 units in 20 counties; a cap of 20 (well below 29) is met by county-favoured trees.
  const fs::path job = capped_job(dir, 2000, 20);
  ASSERT_EQ(run(job, dir), 0) << read_text(dir / "log");
  // The first recorded plan meets the cap (and so the seed did): export it and recount the splits
  // from the unit table's county column.
  ASSERT_EQ(shell(std::string(PLANMILL_BINARY) + " export " + (dir / "run").string() + " --out " +
                  (dir / "csv").string() + " --plans 0:0 >/dev/null 2>&1"),
            0);
  std::map<std::string, std::string> county_of;
  std::istringstream units(read_text(dir / "state" / "units.csv"));
  std::string line;
  std::getline(units, line);
  while (std::getline(units, line)) {
    const auto cells = test::split_csv_line(line);
    county_of[cells.at(0)] = cells.at(1);
  }
  std::map<std::string, std::set<std::string>> districts_of;
  std::istringstream plan(read_text(dir / "csv" / "plans" / "chain-0-record-0.csv"));
  std::getline(plan, line);
  while (std::getline(plan, line)) {
    const auto cells = test::split_csv_line(line);
    districts_of[county_of.at(cells.at(0))].insert(cells.at(1));
  }
  std::size_t split = 0;
  for (const auto& [county, districts] : districts_of) split += districts.size() > 1;
  EXPECT_EQ(districts_of.size(), 20U);
  EXPECT_LE(split, 20U);
}

TEST(SeedCli, AnImpossibleCountyCapNamesTheRuleAndHowCloseItCame) {
  const fs::path dir = test::scratch_dir("planmill_seed_cli", "impossible");
  // 300 units (3 counties) cannot hold 30 districts without splitting a county.
  const fs::path job = capped_job(dir, 300, 0);
  EXPECT_EQ(run(job, dir), 2);
  const std::string log = read_text(dir / "log");
  EXPECT_NE(log.find("met the population band"), std::string::npos) << log;
  EXPECT_TRUE(std::regex_search(log, std::regex("the closest: [0-9]+ counties are split, the limit is 0"))) << log;
  EXPECT_EQ(log.find("loosen rules.population_tolerance"), std::string::npos) << log;
}

}  // namespace
}  // namespace planmill
