// A sweep from end to end as a user runs it: plan -> run -> compare on synth's small state, 2 x 2
// settings with tiny step counts. The bands are recomputed outside planmill, by numpy from each
// setting's exported run (tests/sweep/bands_check.py: numpy.quantile's default, type 7).
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <set>
#include <sstream>

#include "run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using test::read_text;
using test::shell;

const std::string kBin = PLANMILL_BINARY;

std::vector<std::map<std::string, std::string>> read_csv(const fs::path& path) {
  std::istringstream in(read_text(path));
  std::string line;
  std::getline(in, line);
  const std::vector<std::string> header = test::split_csv_line(line);
  std::vector<std::map<std::string, std::string>> rows;
  while (std::getline(in, line)) {
    const std::vector<std::string> cells = test::split_csv_line(line);
    std::map<std::string, std::string> row;
    for (std::size_t i = 0; i < header.size() && i < cells.size(); ++i) row[header[i]] = cells[i];
    rows.push_back(std::move(row));
  }
  return rows;
}

// synth's 200-unit state, a 2 x 2 sweep over it, planned into dir/out.
fs::path plan_grid(const std::string& name) {
  const fs::path dir = test::scratch_dir("planmill-sweep-run", name);
  (void)test::write_synth_job(dir, "chains = 2\nsteps = 120\nrecord_every = 2\nseed = 4");
  std::ofstream(dir / "sweep.toml") << "job = \"state/job.toml\"\n"
                                       "[[axis]]\nkey = \"rules.population_tolerance\"\nvalues = [0.01, 0.08]\n"
                                       "[[axis]]\nkey = \"rules.county_districts_max\"\nvalues = [\"none\", 3]\n";
  EXPECT_EQ(shell(kBin + " sweep plan " + (dir / "sweep.toml").string() + " --out " + (dir / "out").string() +
                  " >/dev/null"),
            0);
  return dir;
}

TEST(SweepRun, PlanRunCompareAndNumpyAgreeOnEveryBand) {
  const fs::path dir = plan_grid("bands");
  const std::string out = (dir / "out").string();
  // One setting alone (as an array task would), then all: the finished one is skipped.
  ASSERT_EQ(shell(kBin + " sweep run " + out + " --setting 2 --quiet >/dev/null"), 0);
  EXPECT_EQ(shell(kBin + " sweep run " + out + " --setting 4 --quiet 2>" + (dir / "err").string()), 2);
  EXPECT_NE(read_text(dir / "err").find("'--setting'"), std::string::npos);
  ASSERT_EQ(shell(kBin + " sweep run " + out + " --quiet >" + (dir / "run.out").string()), 0);
  EXPECT_NE(read_text(dir / "run.out").find("setting 002-population_tolerance=0.08-county_districts_max=none: "
                                            "finished already, skipped"),
            std::string::npos)
      << read_text(dir / "run.out");
  std::vector<fs::path> runs;
  for (const auto& s : read_csv(dir / "out/settings.csv")) {
    runs.push_back(dir / "out" / s.at("run"));
    EXPECT_EQ(shell(kBin + " status " + runs.back().string() + " >/dev/null"), 0) << runs.back();
  }
  ASSERT_EQ(runs.size(), 4u);

  // 60 records per chain is short of the verdict's 200: every verdict fails, loudly, and exit 3.
  const std::string compare = kBin + " sweep compare " + out + " --csv " + (dir / "c.csv").string() + " --json " +
                              (dir / "c.json").string() + " --html " + (dir / "c.html").string();
  ASSERT_EQ(shell(compare + " >" + (dir / "compare.out").string()), 3);
  const std::string text = read_text(dir / "compare.out");
  EXPECT_NE(text.find("WARNING: 4 of 4 settings have not passed their convergence verdict"), std::string::npos) << text;
  EXPECT_NE(text.find("rules.population_tolerance, with rules.county_districts_max = none:"), std::string::npos);
  EXPECT_NE(text.find("rules.county_districts_max, with rules.population_tolerance = 0.08:"), std::string::npos);

  // One row per setting and measure; every setting has the same measures.
  const auto rows = read_csv(dir / "c.csv");
  std::map<std::string, std::set<std::string>> measures;
  for (const auto& r : rows) {
    EXPECT_TRUE(measures[r.at("index")].insert(r.at("measure")).second) << r.at("index") << " " << r.at("measure");
    EXPECT_EQ(r.at("verdict"), "fail");
    EXPECT_EQ(r.at("status"), "finished");
  }
  ASSERT_EQ(measures.size(), 4u);
  for (const auto& [index, names] : measures) EXPECT_EQ(names, measures.begin()->second) << index;
  const std::set<std::string>& names = measures.begin()->second;
  for (const char* m : {"election.gov.seats.A", "election.sen.seats.B", "compactness.cut_edges",
                        "compactness.polsby_popper_mean", "splits.counties_split", "population_deviation",
                        "group.grp.sorted_shares.position_1", "group.grp.sorted_shares.position_4"})
    EXPECT_EQ(names.count(m), 1u) << m;
  EXPECT_EQ(rows.size(), 4 * names.size());

  // numpy, from each run's own export, agrees with every band.
  std::string check = "/usr/bin/python3 " PLANMILL_SOURCE_DIR "/tests/sweep/bands_check.py " + (dir / "c.csv").string();
  for (std::size_t i = 0; i < runs.size(); ++i) {
    const fs::path exported = dir / ("export-" + std::to_string(i));
    ASSERT_EQ(shell(kBin + " export " + runs[i].string() + " --out " + exported.string() +
                    " --every 1 --tallies --plan-layout none >/dev/null"),
              0);
    check += " " + std::to_string(i) + "=" + exported.string();
  }
  EXPECT_EQ(shell(check + " >" + (dir / "numpy.out").string()), 0) << read_text(dir / "numpy.out");

  // An output that cannot be written: exit 5, and the others are not written either.
  EXPECT_EQ(shell(kBin + " sweep compare " + out + " --csv " + (dir / "new.csv").string() + " --html " +
                  (dir / "no-such-folder" / "c.html").string() + " >/dev/null 2>&1"),
            5);
  EXPECT_FALSE(fs::exists(dir / "new.csv"));
  EXPECT_FALSE(fs::exists(dir / "new.csv.staged"));

  // The JSON says the same per setting; the HTML page holds a figure per shown measure.
  const nlohmann::json j = nlohmann::json::parse(read_text(dir / "c.json"));
  ASSERT_EQ(j.at("settings").size(), 4u);
  EXPECT_EQ(j.at("settings").at(1).at("values").at("rules.county_districts_max"), "3");
  EXPECT_EQ(j.at("settings").at(1).at("measures").size(), names.size());
  const std::string html = read_text(dir / "c.html");
  EXPECT_NE(html.find("<svg"), std::string::npos);
  EXPECT_NE(html.find("have not passed their convergence verdict"), std::string::npos);
  EXPECT_EQ(html.find("<script"), std::string::npos);
}

// Tightening the tolerance never widens the population-deviation band: every record of a setting
// lies within its tolerance (a hard rule), and of two settings that differ only in the
// tolerance, the tighter one's band lies at or below the looser one's.
TEST(SweepRun, TighterToleranceNeverWidensTheDeviationBand) {
  const fs::path dir = plan_grid("tolerance");
  ASSERT_EQ(shell(kBin + " sweep run " + (dir / "out").string() + " --quiet >/dev/null"), 0);
  ASSERT_EQ(shell(kBin + " sweep compare " + (dir / "out").string() + " --csv " + (dir / "c.csv").string() +
                  " >/dev/null"),
            3);
  std::map<std::pair<std::string, std::string>, std::map<std::string, double>> high;  // (cap, tol) -> band
  for (const auto& r : read_csv(dir / "c.csv")) {
    if (r.at("measure") != "population_deviation") continue;
    const double tol = std::stod(r.at("rules.population_tolerance"));
    EXPECT_LE(std::stod(r.at("high")), tol);
    EXPECT_LE(std::stod(r.at("median")), std::stod(r.at("high")));
    high[{r.at("rules.county_districts_max"), r.at("rules.population_tolerance")}] = {
        {"low", std::stod(r.at("low"))}, {"high", std::stod(r.at("high"))}};
  }
  ASSERT_EQ(high.size(), 4u);
  for (const std::string cap : {"none", "3"}) {
    const auto& tight = high.at({cap, "0.01"});
    const auto& loose = high.at({cap, "0.08"});
    EXPECT_LE(tight.at("high"), loose.at("high")) << cap;
    EXPECT_LE(tight.at("high") - tight.at("low"), loose.at("high") - loose.at("low")) << cap;
  }
  // And every record of the tight settings within 0.01, as exported.
  for (const char* run : {"out/settings/000-population_tolerance=0.01-county_districts_max=none/run",
                          "out/settings/001-population_tolerance=0.01-county_districts_max=3/run"}) {
    ASSERT_EQ(shell(kBin + " export " + (dir / run).string() + " --out " + (dir / "x").string() + " >/dev/null"), 0);
    const auto records = read_csv(dir / "x/observables.csv");
    EXPECT_EQ(records.size(), 120u);
    for (const auto& o : records) EXPECT_LE(std::stod(o.at("population_deviation")), 0.01);
    fs::remove_all(dir / "x");
  }
}

}  // namespace
}  // namespace planmill
