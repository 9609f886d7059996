// The planmill executable as a user meets it: help, version, exit codes, one-line errors that
// name the file and line, and the check and selftest commands on real files.
#include <gtest/gtest.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

namespace {

namespace fs = std::filesystem;

struct Outcome {
  int status;
  std::string out, err;
};

std::string slurp(const fs::path& path) {
  std::ifstream in(path);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

class Cli : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_ = fs::temp_directory_path() / ("planmill_cli_" + std::to_string(getpid()) + "_" +
                                        ::testing::UnitTest::GetInstance()->current_test_info()->name());
    fs::create_directories(dir_);
  }
  void TearDown() override { fs::remove_all(dir_); }

  Outcome run(const std::string& args) { return run_prefixed("", args); }
  Outcome run_prefixed(const std::string& prefix, const std::string& args) {
    const std::string command = prefix + std::string(PLANMILL_BINARY) + " " + args + " >" + (dir_ / "out").string() +
                                " 2>" + (dir_ / "err").string();
    const int raw = std::system(command.c_str());
    return {WIFEXITED(raw) ? WEXITSTATUS(raw) : -1, slurp(dir_ / "out"), slurp(dir_ / "err")};
  }
  // run() killed after `seconds` (exit status 137 then), for commands that used to hang.
  Outcome run_within(int seconds, const std::string& args) {
    return run_prefixed("timeout -s KILL " + std::to_string(seconds) + " ", args);
  }
  void write(const std::string& name, const std::string& text) { std::ofstream(dir_ / name) << text; }
  std::string path(const std::string& name) const { return (dir_ / name).string(); }

  // A 3x3 grid map: units a..i, row-major, unequal populations, two counties.
  void write_small_map(const std::string& kernel, std::size_t districts, double deviation) {
    write("units.csv", "id,people,cty\na,3,x\nb,2,x\nc,2,y\nd,1,x\ne,3,x\nf,2,y\ng,2,x\nh,1,y\ni,2,y\n");
    write("adj.csv", "from,to\na,b\nb,c\nd,e\ne,f\ng,h\nh,i\na,d\nd,g\nb,e\ne,h\nc,f\nf,i\n");
    write("job.toml", "[map]\nunits = \"units.csv\"\nadjacency = \"adj.csv\"\nid = \"id\"\npopulation = \"people\"\n"
                      "county = \"cty\"\n[districts]\ncount = " +
                          std::to_string(districts) + "\n[rules]\npopulation_tolerance = " + std::to_string(deviation) +
                          "\n[rules.weights]\ncut_edges = 0.5\n[sampler]\nkernel = \"" + kernel + "\"\n");
  }

  fs::path dir_;
};

TEST_F(Cli, HelpAndVersion) {
  const auto help = run("--help");
  EXPECT_EQ(help.status, 0);
  for (const char* sub : {"synth", "check", "selftest", "run", "diagnose"})
    EXPECT_NE(help.out.find(sub), std::string::npos) << sub;
  const auto version = run("--version");
  EXPECT_EQ(version.status, 0);
  EXPECT_NE(version.out.find("planmill 0."), std::string::npos) << version.out;
  EXPECT_EQ(run("check --help").status, 0);
}

TEST_F(Cli, UnknownSubcommandsAndOptionsExitTwo) {
  EXPECT_EQ(run("frobnicate").status, 2);
  EXPECT_EQ(run("check --no-such-option x.toml").status, 2);
  EXPECT_EQ(run("check").status, 2);  // the job file is required
}

TEST_F(Cli, SynthCitiesOptionReachesTheStateAndIsChecked) {
  const auto o = run("synth --units 400 --districts 3 --seed 3 --cities 2 --out " + path("two"));
  EXPECT_EQ(o.status, 0) << o.err;
  EXPECT_NE(o.out.find("(2 cities)"), std::string::npos) << o.out;
  EXPECT_NE(slurp(dir_ / "two" / "job.toml").find("--cities 2"), std::string::npos);
  const auto bad = run("synth --units 400 --districts 3 --cities 9 --out " + path("bad"));
  EXPECT_EQ(bad.status, 2);
  EXPECT_NE(bad.err.find("'--cities'"), std::string::npos) << bad.err;
}

TEST_F(Cli, CheckSummarisesTheDemoJob) {
  const auto o = run(std::string("check ") + PLANMILL_SOURCE_DIR + "/jobs/demo/job.toml");
  EXPECT_EQ(o.status, 0) << o.err;
  EXPECT_NE(o.out.find("units        2000"), std::string::npos) << o.out;
  EXPECT_NE(o.out.find("districts    20"), std::string::npos) << o.out;
  EXPECT_NE(o.out.find("components   1"), std::string::npos) << o.out;
}

TEST_F(Cli, BadInputIsOneLineNamingFileAndLine) {
  write_small_map("flip", 3, 0.3);
  write("units.csv", "id,people,cty\na,3,x\nb,two,x\nc,2,y\nd,1,x\ne,3,x\nf,2,y\ng,2,x\nh,1,y\ni,2,y\n");
  const auto o = run("check " + path("job.toml"));
  EXPECT_EQ(o.status, 2);
  EXPECT_NE(o.err.find("units.csv:3"), std::string::npos) << o.err;
  EXPECT_NE(o.err.find("people"), std::string::npos) << o.err;
  EXPECT_EQ(std::count(o.err.begin(), o.err.end(), '\n'), 1) << o.err;
}

TEST_F(Cli, TooManyDistrictsIsRefusedOnItsFace) {
  write_small_map("flip", 12, 0.3);
  const auto o = run("check " + path("job.toml"));
  EXPECT_EQ(o.status, 2);
  EXPECT_NE(o.err.find("districts.count"), std::string::npos) << o.err;
}

TEST_F(Cli, SelftestOnAUserMapComparesWithExactEnumeration) {
  write_small_map("merge-split", 3, 0.3);
  const auto o = run("selftest " + path("job.toml") + " --samples 4000 --frequencies " + path("freq.csv") +
                     " --json " + path("result.json"));
  EXPECT_EQ(o.status, 0) << o.out << o.err;
  EXPECT_NE(o.out.find("selftest passed"), std::string::npos) << o.out;
  const std::string freq = slurp(dir_ / "freq.csv");
  EXPECT_EQ(freq.rfind("case,plan,exact,seen,empirical\n", 0), 0u);
  double total_exact = 0;
  std::istringstream lines(freq);
  std::string line;
  std::getline(lines, line);
  while (std::getline(lines, line)) {
    std::istringstream cells(line);
    std::string cell;
    std::getline(cells, cell, ',');
    std::getline(cells, cell, ',');
    EXPECT_EQ(cell.size(), 9u);  // one label per unit
    std::getline(cells, cell, ',');
    total_exact += std::stod(cell);
  }
  EXPECT_NEAR(total_exact, 1.0, 1e-4);
  EXPECT_NE(slurp(dir_ / "result.json").find("\"passed\": true"), std::string::npos);
}

TEST_F(Cli, SelftestReportsAFlipChainThatCannotReachEveryPlan) {
  // Under these bounds single-unit flips cannot connect the 14 valid plans of this map: a
  // brute-force Python enumeration of all 3^9 labellings, written outside planmill, finds 14
  // plans in 5 flip-connected components. The self-test must say so and exit 3, not pass.
  write_small_map("flip", 3, 0.3);
  const auto o = run("selftest " + path("job.toml") + " --samples 4000");
  EXPECT_EQ(o.status, 3) << o.out;
  EXPECT_NE(o.out.find("FAIL"), std::string::npos) << o.out;
}

}  // namespace

namespace {

TEST_F(Cli, StartingPlanThatBreaksTheRulesIsNamedWithDistrictAndAmount) {
  write_small_map("merge-split", 3, 0.1);
  // Districts: {a,b,c} = 7, {d,e,f} = 6, {g,h,i} = 5 people; ideal 6, so +/-10% allows 6 only.
  write("start.csv", "unit,district\na,1\nb,1\nc,1\nd,2\ne,2\nf,2\ng,3\nh,3\ni,3\n");
  std::string job = slurp(dir_ / "job.toml");
  job.replace(job.find("count = 3"), 9, "count = 3\nstart = \"start.csv\"");
  write("job.toml", job);
  const auto o = run("check " + path("job.toml"));
  EXPECT_EQ(o.status, 2);
  EXPECT_NE(o.err.find("start.csv"), std::string::npos) << o.err;
  EXPECT_NE(o.err.find("district 1"), std::string::npos) << o.err;
  EXPECT_NE(o.err.find("district 3"), std::string::npos) << o.err;
}

}  // namespace

// Issue 11, item 2: a one-district job used to pass check and then spin for ever in run (the
// cut-edge draw never found a cut edge). `timeout` keeps a regression from hanging the suite.
TEST_F(Cli, OneDistrictIsRefusedByCheckAndRun) {
  write_small_map("recombination", 1, 0.3);
  for (const std::string command : {"check " + path("job.toml"),
                                    "run " + path("job.toml") + " --quiet --output " + path("runs")}) {
    const auto o = run_within(60, command);
    EXPECT_EQ(o.status, 2) << command << "\n" << o.err;
    EXPECT_NE(o.err.find("job.toml:"), std::string::npos) << o.err;
    EXPECT_NE(o.err.find("'districts.count'"), std::string::npos) << o.err;
    EXPECT_NE(o.err.find("at least 2"), std::string::npos) << o.err;
    EXPECT_EQ(std::count(o.err.begin(), o.err.end(), '\n'), 1) << o.err;
  }
}

TEST_F(Cli, SynthRefusesOneDistrict) {
  const auto o = run("synth --units 40 --districts 1 --out " + path("one"));
  EXPECT_EQ(o.status, 2);
  EXPECT_NE(o.err.find("'--districts'"), std::string::npos) << o.err;
  EXPECT_NE(o.err.find("at least 2"), std::string::npos) << o.err;
  EXPECT_EQ(std::count(o.err.begin(), o.err.end(), '\n'), 1) << o.err;
  EXPECT_FALSE(fs::exists(dir_ / "one" / "job.toml"));
}

// Issue 11, item 11, as check meets it: a whole population that is only too large says so.
TEST_F(Cli, HugePopulationIsTooLargeNotFractional) {
  write_small_map("flip", 3, 0.3);
  write("units.csv", "id,people,cty\na,3,x\nb,1e17,x\nc,2,y\nd,1,x\ne,3,x\nf,2,y\ng,2,x\nh,1,y\ni,2,y\n");
  const auto o = run("check " + path("job.toml"));
  EXPECT_EQ(o.status, 2);
  EXPECT_NE(o.err.find("units.csv:3: 'people': population '1e17' is too large (at most "), std::string::npos) << o.err;
  EXPECT_EQ(o.err.find("whole"), std::string::npos) << o.err;
}

// Issue 11, item 14: options that used to be taken silently, run on or wrap around. Each is one
// line naming the option, exit 2, and nothing is run.
TEST_F(Cli, SelftestRefusesAMapTooBigToEnumerate) {
  const auto o = run_within(60, std::string("selftest ") + PLANMILL_SOURCE_DIR + "/jobs/demo/job.toml");
  EXPECT_EQ(o.status, 2) << o.out << o.err;
  EXPECT_NE(o.err.find("2000 units, too many to enumerate"), std::string::npos) << o.err;
  EXPECT_NE(o.err.find("at most 40 units"), std::string::npos) << o.err;
  EXPECT_EQ(std::count(o.err.begin(), o.err.end(), '\n'), 1) << o.err;
}

TEST_F(Cli, SelftestRefusesZeroSamplesOrThin) {
  for (const std::string option : {"--samples", "--thin"}) {
    const auto o = run_within(60, "selftest --quick " + option + " 0");
    EXPECT_EQ(o.status, 2) << option << "\n" << o.out << o.err;
    EXPECT_NE(o.err.find("'" + option + "': is 0, too small (at least 1)"), std::string::npos) << o.err;
    EXPECT_EQ(std::count(o.err.begin(), o.err.end(), '\n'), 1) << o.err;
    EXPECT_EQ(o.out.find("selftest"), std::string::npos) << o.out;
  }
}

TEST_F(Cli, RunRefusesMaxStepsBelowTheJobsSteps) {
  write_small_map("flip", 3, 0.3);
  write("job.toml", slurp(dir_ / "job.toml") + "steps = 200\n");
  const auto o = run_within(120, "run " + path("job.toml") + " --quiet --output " + path("runs") +
                                     " --until-converged --max-steps 50");
  EXPECT_EQ(o.status, 2) << o.out << o.err;
  EXPECT_NE(o.err.find("'--max-steps': is 50, below the job's sampler.steps (200)"), std::string::npos) << o.err;
  EXPECT_EQ(std::count(o.err.begin(), o.err.end(), '\n'), 1) << o.err;
  EXPECT_FALSE(fs::exists(dir_ / "runs" / "run-state.json"));
}

TEST_F(Cli, ExportRefusesEveryZeroAndRungsBeyondAnyLadder) {
  struct Case {
    std::string args, expect;
  };
  for (const Case& c : {Case{"--every 0", "'--every': is 0, too small (at least 1)"},
                        Case{"--rung 18446744073709551616", "'--rung': is 18446744073709551616, too large (at most 63)"},
                        Case{"--rung 64", "'--rung': is 64, too large (at most 63)"},
                        Case{"--rung -1", "'--rung': is '-1', not a whole number"}}) {
    const auto o = run("export " + path("runs") + " --out " + path("csv") + " " + c.args);
    EXPECT_EQ(o.status, 2) << c.args << "\n" << o.err;
    EXPECT_NE(o.err.find(c.expect), std::string::npos) << o.err;
    EXPECT_EQ(std::count(o.err.begin(), o.err.end(), '\n'), 1) << o.err;
    EXPECT_LT(o.err.size(), 200u) << o.err;  // no printed range of a double
  }
}

TEST_F(Cli, RunOnAFolderSaysItIsAFolder) {
  fs::create_directories(dir_ / "runs" / "old");
  write("runs/old/job.toml", "[districts]\ncount = 2\n");
  write("runs/old/run-state.json", "{}\n");
  const auto held = run("run " + path("runs/old"));
  EXPECT_EQ(held.status, 2) << held.err;
  EXPECT_NE(held.err.find("runs/old: is a folder, not a job file"), std::string::npos) << held.err;
  EXPECT_NE(held.err.find("--output " + path("runs/old") + " --resume"), std::string::npos) << held.err;
  EXPECT_EQ(std::count(held.err.begin(), held.err.end(), '\n'), 1) << held.err;
  fs::create_directories(dir_ / "empty");
  const auto empty = run("run " + path("empty"));
  EXPECT_EQ(empty.status, 2) << empty.err;
  EXPECT_NE(empty.err.find("is a folder, not a job file"), std::string::npos) << empty.err;
  EXPECT_EQ(empty.err.find("the job file is empty"), std::string::npos) << empty.err;
}

namespace {

// Issue 16: a soft weight that recombination cannot honour stops check and run (exit 2, one line
// naming the key and the kernels that can), before anything is written.
TEST_F(Cli, SoftWeightWithRecombinationIsRefusedByCheckAndRun) {
  write_small_map("recombination", 3, 0.3);
  for (const std::string command : {"check " + path("job.toml"),
                                    "run " + path("job.toml") + " --quiet --output " + path("runs")}) {
    const auto o = run_within(60, command);
    EXPECT_EQ(o.status, 2) << command << "\n" << o.err;
    EXPECT_NE(o.err.find("'rules.weights.cut_edges': a soft weight, but sampler.kernel recombination has no target law"),
              std::string::npos)
        << o.err;
    EXPECT_NE(o.err.find("\"merge-split\" or \"flip\""), std::string::npos) << o.err;
    EXPECT_EQ(std::count(o.err.begin(), o.err.end(), '\n'), 1) << o.err;
  }
  EXPECT_FALSE(fs::exists(dir_ / "runs"));
}

// The hard limits as check lists them, the group-blind flag, and score naming each broken limit by
// its key (exit 6).
TEST_F(Cli, CheckListsTheLimitsAndScoreNamesEveryBrokenOne) {
  write("units.csv", "id,people,cty,town,grp\na,3,x,p,3\nb,2,x,p,0\nc,2,y,q,0\nd,1,x,p,1\ne,3,x,,0\nf,2,y,q,0\n"
                     "g,2,x,,2\nh,1,y,q,0\ni,2,y,,0\n");
  write("adj.csv", "from,to\na,b\nb,c\nd,e\ne,f\ng,h\nh,i\na,d\nd,g\nb,e\ne,h\nc,f\nf,i\n");
  write("job.toml", "[map]\nunits = \"units.csv\"\nadjacency = \"adj.csv\"\nid = \"id\"\npopulation = \"people\"\n"
                    "county = \"cty\"\nmunicipality = \"town\"\ngroups = [\"grp\"]\n[districts]\ncount = 3\n"
                    "[rules]\npopulation_tolerance = 0.5\npopulation_range_max = 0.5\ncounty_pieces_max = 3\n"
                    "municipality_districts_max = 1\n[[rules.group_share]]\ngroup = \"grp\"\nthreshold = 0.5\n"
                    "at_least = 2\n[sampler]\nkernel = \"recombination\"\n");
  const auto c = run("check " + path("job.toml"));
  EXPECT_EQ(c.status, 0) << c.err;
  for (const char* line : {"rule         overall population range at most 50.00% of the ideal",
                           "rule         at most 3 county pieces", "rule         no municipality in more than 1 districts",
                           "rule         at least 2 districts with a grp share of at least 0.5",
                           "group-blind  no: rules.group_share reads the group column 'grp'"})
    EXPECT_NE(c.out.find(line), std::string::npos) << line << "\n" << c.out;
  // Rows as districts: populations 7, 6, 5 (ideal 6, range 2/6 = 33%: within 50%); counties x
  // {a,b,d,e,g} and y {c,f,h,i} meet 3 and 3 districts (6 pieces); town p {a,b,d} meets 2;
  // grp shares 3/7, 1/6, 2/5: none at 0.5.
  write("rows.csv", "unit,district\na,1\nb,1\nc,1\nd,2\ne,2\nf,2\ng,3\nh,3\ni,3\n");
  const auto s = run("score " + path("job.toml") + " " + path("rows.csv"));
  EXPECT_EQ(s.status, 6) << s.out << s.err;
  for (const char* key : {"[rules.county_pieces_max]", "[rules.municipality_districts_max]",
                          "[rules.group_share.at_least]"})
    EXPECT_NE(s.out.find(key), std::string::npos) << key << "\n" << s.out;
  EXPECT_EQ(s.out.find("[rules.population_range_max]"), std::string::npos) << s.out;
  EXPECT_NE(s.out.find("6 county pieces, the limit is 3 (3 over)"), std::string::npos) << s.out;
}

}  // namespace
