// "Split only as needed" the way a user asks for it: rules.county_splits_max = "fewest" in a job on
// `planmill synth`'s state. `check` states the cap found and its lower bound; `run` holds it in
// every recorded plan (recounted here from the exported plans and the unit table's county column)
// and records the search in the run state. Tree weights on a map without the codes are refused.
#include <gtest/gtest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <regex>
#include <set>
#include <sstream>
#include <string>

#include <nlohmann/json.hpp>

#include "../support/run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using test::read_text;
using test::shell;

fs::path fewest_job(const fs::path& dir) {
  EXPECT_EQ(shell(std::string(PLANMILL_BINARY) + " synth --units 600 --districts 6 --seed 3 --out " +
                  (dir / "state").string() + " >/dev/null"),
            0);
  const fs::path job = dir / "state" / "job.toml";
  std::ofstream(job, std::ios::app) << "county_splits_max = \"fewest\"\nfewest_splits_attempts = 40\n"
                                    << "[sampler]\nkernel = \"recombination\"\nchains = 2\nsteps = 40\n"
                                    << "tree_weight_county = 20.0\n";
  return job;
}

TEST(FewestCli, CheckStatesTheCapAndRunHoldsItInEveryPlan) {
  const fs::path dir = test::scratch_dir("planmill_fewest_cli", "run");
  const fs::path job = fewest_job(dir);
  const std::string bin = PLANMILL_BINARY;
  ASSERT_EQ(shell(bin + " check " + job.string() + " >" + (dir / "check").string() + " 2>&1"), 0)
      << read_text(dir / "check");
  const std::string check = read_text(dir / "check");
  std::smatch m;
  ASSERT_TRUE(std::regex_search(check, m, std::regex("at most ([0-9]+) counties split: split only as needed, "
                                                     "the fewest found in 40 attempts")))
      << check;
  const std::size_t cap = std::stoul(m[1]);

  // The lower bound, from the unit table: counties with more people than floor(1.05 * ideal).
  std::map<std::string, std::string> county_of;
  std::map<std::string, long long> people;
  long long total = 0;
  std::istringstream units(read_text(dir / "state" / "units.csv"));
  std::string line;
  std::getline(units, line);
  while (std::getline(units, line)) {
    const auto cells = test::split_csv_line(line);
    county_of[cells.at(0)] = cells.at(1);
    people[cells.at(1)] += std::stoll(cells.at(3));
    total += std::stoll(cells.at(3));
  }
  const auto hi = static_cast<long long>(std::floor(1.05 * static_cast<double>(total) / 6.0 + 1e-9));
  std::size_t too_big = 0;
  for (const auto& [county, p] : people) too_big += p > hi;
  EXPECT_GE(cap, too_big);

  ASSERT_EQ(shell(bin + " run " + job.string() + " --output " + (dir / "run").string() + " --quiet >" +
                  (dir / "log").string() + " 2>&1"),
            0)
      << read_text(dir / "log");
  const auto state = nlohmann::json::parse(read_text(dir / "run" / "run-state.json"));
  const auto& fewest = state.at("measures").at("county_splits_fewest");
  EXPECT_EQ(fewest.at("cap").get<std::size_t>(), cap);
  EXPECT_EQ(fewest.at("lower_bound").get<std::size_t>(), too_big);
  EXPECT_EQ(fewest.at("proven").get<bool>(), cap == too_big);

  ASSERT_EQ(shell(bin + " export " + (dir / "run").string() + " --out " + (dir / "csv").string() + " --every 1 >/dev/null 2>&1"), 0);
  std::size_t plans = 0;
  for (const auto& entry : fs::directory_iterator(dir / "csv" / "plans")) {
    EXPECT_LE(test::areas_split(entry.path(), county_of), cap) << entry.path();
    ++plans;
  }
  EXPECT_EQ(plans, 2U * 40U);  // both chains, a record after each of the 40 steps
}

TEST(FewestCli, TreeWeightsWithoutTheCodesAreRefusedByName) {
  const fs::path dir = test::scratch_dir("planmill_fewest_cli", "codes");
  ASSERT_EQ(shell(std::string(PLANMILL_BINARY) + " synth --units 200 --districts 4 --seed 5 --out " +
                  (dir / "state").string() + " >/dev/null"),
            0);
  const fs::path job = dir / "state" / "job.toml";
  std::string text = read_text(job);
  text = std::regex_replace(text, std::regex("municipality = \"town\"\n"), "");
  std::ofstream(job, std::ios::trunc) << text << "[sampler]\nkernel = \"merge-split\"\ntree_weight_municipality = 4.0\n";
  EXPECT_EQ(shell(std::string(PLANMILL_BINARY) + " check " + job.string() + " >" + (dir / "log").string() + " 2>&1"), 2);
  const std::string log = read_text(dir / "log");
  EXPECT_NE(log.find("'sampler.tree_weight_municipality': municipality tree weights need municipality codes"),
            std::string::npos)
      << log;
}

}  // namespace
}  // namespace planmill
