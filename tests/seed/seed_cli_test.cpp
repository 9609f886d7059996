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
  const auto county_of = test::unit_column(dir / "state" / "units.csv", 1);
  std::set<std::string> counties;
  for (const auto& [unit, county] : county_of) counties.insert(county);
  EXPECT_EQ(counties.size(), 20U);
  EXPECT_LE(test::areas_split(dir / "csv" / "plans" / "chain-0-record-0.csv", county_of), 20U);
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
