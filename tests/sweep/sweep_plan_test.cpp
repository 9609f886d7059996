// Sweep files: the grid, the setting jobs and every kind of bad input, as a user meets them
// (`planmill sweep plan`, exit 2 and one line naming the key) and through plan_sweep itself.
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>

#include "planmill/base/error.hpp"
#include "planmill/job/job.hpp"
#include "planmill/sweep/sweep.hpp"
#include "run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using test::read_text;
using test::shell;

const std::string kBin = PLANMILL_BINARY;

struct SweepPlanTest : ::testing::Test {
  fs::path dir, job;
  void SetUp() override {
    dir = test::scratch_dir("planmill-sweep-plan", ::testing::UnitTest::GetInstance()->current_test_info()->name());
    job = test::write_synth_job(dir, "chains = 2\nsteps = 40\nrecord_every = 2\nseed = 3");
  }
  fs::path sweep_file(const std::string& axes, const std::string& job_line = "job = \"state/job.toml\"") {
    const fs::path f = dir / "sweep.toml";
    std::ofstream(f) << job_line << "\n" << axes;
    return f;
  }
  // Exit status of `planmill sweep plan`, its stderr in `err`.
  int plan(const fs::path& file, std::string& err, const std::string& more = "") {
    const int status = shell(kBin + " sweep plan " + file.string() + " --out " + (dir / "out").string() + " " +
                             more + " >" + (dir / "plan.out").string() + " 2>" + (dir / "plan.err").string());
    err = read_text(dir / "plan.err");
    return status;
  }
};

TEST_F(SweepPlanTest, GridIsTheProductWithTheLastAxisFastest) {
  const fs::path f = sweep_file(
      "[[axis]]\nkey = \"rules.population_tolerance\"\nvalues = [0.02, 0.1]\n"
      "[[axis]]\nkey = \"rules.county_splits_max\"\nvalues = [\"none\", 1, 2]\n"
      "[[axis]]\nkey = \"sampler.steps\"\nvalues = [60]\n");
  const sweep::SweepPlan plan = sweep::plan_sweep(f.string(), (dir / "out").string());
  ASSERT_EQ(plan.settings.size(), 2u * 3u * 1u);
  const double tolerance[] = {0.02, 0.1};
  const std::int64_t cap[] = {-1, 1, 2};
  for (std::size_t i = 0; i < plan.settings.size(); ++i) {
    const sweep::Setting& s = plan.settings[i];
    EXPECT_EQ(s.index, i);
    EXPECT_EQ(s.pick, (std::vector<std::size_t>{i / 3, i % 3, 0}));
    // The folder names the index and every axis with more than one value, not the fixed one.
    const std::string cap_label = i % 3 == 0 ? "none" : std::to_string(cap[i % 3]);
    char expected[128];
    std::snprintf(expected, sizeof expected, "settings/%03zu-population_tolerance=%s-county_splits_max=%s", i,
                  i / 3 == 0 ? "0.02" : "0.1", cap_label.c_str());
    EXPECT_EQ(s.folder, expected);
    // The job reader reads the values back, the inputs from the base job's folder, the run in the setting's.
    const fs::path job_path = dir / "out" / s.folder / "job.toml";
    const JobSpec spec = parse_job_text(s.job_text, job_path.string());
    EXPECT_EQ(spec.rules.population_tolerance, tolerance[i / 3]);
    EXPECT_EQ(spec.rules.county_splits_max, cap[i % 3]);
    EXPECT_EQ(spec.sampler.steps, 60u);
    EXPECT_EQ(spec.sampler.seed, 3u);
    EXPECT_EQ(fs::path(spec.map.units_path), fs::absolute(dir / "state" / "units.csv").lexically_normal());
    EXPECT_EQ(fs::path(spec.output.dir), (fs::absolute(dir / "out" / s.folder) / "run").lexically_normal());
  }
}

TEST_F(SweepPlanTest, PlanWritesTheFolderOnceAndCheckWritesNothing) {
  const fs::path f = sweep_file("[[axis]]\nkey = \"rules.population_tolerance\"\nvalues = [0.03, 0.06]\n");
  std::string err;
  ASSERT_EQ(plan(f, err, "--check"), 0) << err;
  EXPECT_FALSE(fs::exists(dir / "out"));
  EXPECT_NE(read_text(dir / "plan.out").find("000-population_tolerance=0.03"), std::string::npos);
  ASSERT_EQ(plan(f, err), 0) << err;
  EXPECT_TRUE(fs::exists(dir / "out/settings/001-population_tolerance=0.06/job.toml"));
  EXPECT_EQ(read_text(dir / "out/sweep.toml"), read_text(f));
  const std::string csv = read_text(dir / "out/settings.csv");
  EXPECT_EQ(csv, "index,folder,job,run,rules.population_tolerance\n"
                 "0,settings/000-population_tolerance=0.03,settings/000-population_tolerance=0.03/job.toml,"
                 "settings/000-population_tolerance=0.03/run,0.03\n"
                 "1,settings/001-population_tolerance=0.06,settings/001-population_tolerance=0.06/job.toml,"
                 "settings/001-population_tolerance=0.06/run,0.06\n");
  const sweep::SweepFolder folder = sweep::read_sweep_folder((dir / "out").string());
  ASSERT_EQ(folder.settings.size(), 2u);
  EXPECT_EQ(folder.settings[1].values, std::vector<std::string>{"0.06"});
  // The same plan again is left alone; another plan into the same folder is refused, nothing touched.
  ASSERT_EQ(plan(f, err), 0) << err;
  EXPECT_NE(read_text(dir / "plan.out").find("nothing written"), std::string::npos);
  const fs::path other = sweep_file("[[axis]]\nkey = \"rules.population_tolerance\"\nvalues = [0.04]\n");
  EXPECT_EQ(plan(other, err), 2);
  EXPECT_NE(err.find("'--out'"), std::string::npos) << err;
  EXPECT_EQ(read_text(dir / "out/settings.csv"), csv);
}

struct BadSweep {
  std::string name, job_line, axes, key, words;
};

TEST_F(SweepPlanTest, BadInputExitsTwoNamingTheKeyAndWritesNothing) {
  const std::string ok_job = "job = \"state/job.toml\"";
  const std::vector<BadSweep> cases = {
      {"unknown key", ok_job, "[[axis]]\nkey = \"rules.population_tolerence\"\nvalues = [0.1]\n",
       "'rules.population_tolerence'", "not a job key a sweep can vary"},
      {"map key", ok_job, "[[axis]]\nkey = \"map.units\"\nvalues = [\"x.csv\"]\n", "'map.units'", "a sweep can vary"},
      {"empty axis", ok_job, "[[axis]]\nkey = \"rules.population_tolerance\"\nvalues = []\n",
       "'rules.population_tolerance'", "empty list"},
      {"no values", ok_job, "[[axis]]\nkey = \"sampler.seed\"\n", "'sampler.seed'", "no list of values"},
      {"value refused", ok_job, "[[axis]]\nkey = \"rules.population_tolerance\"\nvalues = [0.05, 1.5]\n",
       "'rules.population_tolerance'", "the value 1.5 of setting 1"},
      {"integer as float", ok_job, "[[axis]]\nkey = \"sampler.steps\"\nvalues = [100, 2e3]\n", "'sampler.steps'",
       "setting 1"},
      {"weight with recombination", ok_job, "[[axis]]\nkey = \"rules.weights.cut_edges\"\nvalues = [0, 0.5]\n",
       "'rules.weights.cut_edges'", "merge-split"},
      {"twice", ok_job, "[[axis]]\nkey = \"sampler.seed\"\nvalues = [1, 1]\n", "'sampler.seed'", "twice"},
      {"missing base job", "job = \"state/nowhere.toml\"", "[[axis]]\nkey = \"sampler.seed\"\nvalues = [1]\n",
       "'job'", "not a file"},
      {"no job", "", "[[axis]]\nkey = \"sampler.seed\"\nvalues = [1]\n", "'job'", "missing"},
      {"no axis", ok_job, "", "'axis'", "no [[axis]]"},
      {"stray key", ok_job + "\nsteps = 3", "[[axis]]\nkey = \"sampler.seed\"\nvalues = [1]\n", "'steps'",
       "not a key of a sweep file"},
  };
  for (const BadSweep& c : cases) {
    const fs::path f = sweep_file(c.axes, c.job_line);
    std::string err;
    EXPECT_EQ(plan(f, err), 2) << c.name << ": " << err;
    EXPECT_NE(err.find(f.string()), std::string::npos) << c.name << ": " << err;
    EXPECT_NE(err.find(c.key), std::string::npos) << c.name << ": " << err;
    EXPECT_NE(err.find(c.words), std::string::npos) << c.name << ": " << err;
    EXPECT_EQ(std::count(err.begin(), err.end(), '\n'), 1) << c.name << ": " << err;
    EXPECT_FALSE(fs::exists(dir / "out")) << c.name;
  }
}

}  // namespace
}  // namespace planmill
