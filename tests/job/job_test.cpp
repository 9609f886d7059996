// The job file parser: a complete file round-trips into JobSpec; every kind of mistake is an
// InputError naming the file, the key and its line.
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>

#include "planmill/base/error.hpp"
#include "planmill/job/job.hpp"

namespace planmill {
namespace {

const char* kGood = R"(# a complete job
[map]
units = "units.csv"
adjacency = "adj.csv"
id = "unit"
population = "pop"
county = "county"
groups = ["grp"]
[[map.elections]]
name = "gov"
parties = ["A", "B"]
columns = ["gov_a", "gov_b"]

[districts]
count = 20

[rules]
population_tolerance = 0.02
county_splits_max = 5
[rules.weights]
cut_edges = 0.5
[[rules.group_share]]
group = "grp"
threshold = 0.5
weight = 1.5

[sampler]
kernel = "merge-split"
chains = 8
steps = 5000
burn_in = 1000
record_every = 5
seed = 42
gamma = 0.0
beta = 2.0

[output]
dir = "../runs/x"
checkpoint_seconds = 60

[verdict]
rhat_max = 1.05
ess_min = 200
min_records = 300

[compare]
declared = ["cut_edges", "election.gov.efficiency_gap"]
)";

TEST(JobFile, ParsesEveryKeyAndResolvesPathsAgainstTheJobFolder) {
  const JobSpec job = parse_job_text(kGood, "jobs/demo/job.toml");
  EXPECT_EQ(job.map.units_path, "jobs/demo/units.csv");
  EXPECT_EQ(job.map.adjacency_path, "jobs/demo/adj.csv");
  EXPECT_EQ(job.map.id_column, "unit");
  EXPECT_EQ(job.map.county_column, "county");
  ASSERT_EQ(job.map.elections.size(), 1u);
  EXPECT_EQ(job.map.elections[0].columns[1], "gov_b");
  EXPECT_EQ(job.districts, 20u);
  EXPECT_DOUBLE_EQ(job.rules.population_tolerance, 0.02);
  EXPECT_EQ(job.rules.county_splits_max, 5);
  EXPECT_DOUBLE_EQ(job.rules.cut_edges_weight, 0.5);
  ASSERT_EQ(job.rules.group_share.size(), 1u);
  EXPECT_DOUBLE_EQ(job.rules.group_share[0].weight, 1.5);
  EXPECT_EQ(job.sampler.kernel, KernelKind::merge_split);
  EXPECT_EQ(job.sampler.chains, 8u);
  EXPECT_EQ(job.sampler.steps, 5000u);
  EXPECT_EQ(job.sampler.record_every, 5u);
  EXPECT_EQ(job.sampler.seed, 42u);
  EXPECT_DOUBLE_EQ(job.sampler.beta, 2.0);
  EXPECT_EQ(job.output.dir, "jobs/runs/x");
  EXPECT_DOUBLE_EQ(job.verdict.ess_min, 200.0);
  EXPECT_EQ(job.verdict.min_records, 300u);
  EXPECT_EQ(job.compare.declared, (std::vector<std::string>{"cut_edges", "election.gov.efficiency_gap"}));
  EXPECT_EQ(job.text, kGood);
}

struct BadJob {
  const char* name;
  std::string find;     // text in kGood to replace
  std::string replace;  // replacement
  std::string expect;   // must appear in the message (besides the file name)
};

class BadJobFile : public ::testing::TestWithParam<BadJob> {};

TEST_P(BadJobFile, IsAnInputErrorNamingFileKeyAndLine) {
  const BadJob& c = GetParam();
  std::string text = kGood;
  const auto at = text.find(c.find);
  ASSERT_NE(at, std::string::npos) << c.find;
  text.replace(at, c.find.size(), c.replace);
  try {
    (void)parse_job_text(text, "bad.toml");
    FAIL() << "accepted: " << c.name;
  } catch (const InputError& e) {
    const std::string message = e.what();
    EXPECT_NE(message.find("bad.toml:"), std::string::npos) << message;
    EXPECT_GT(e.where().line, 0u) << message;
    EXPECT_NE(message.find(c.expect), std::string::npos) << message;
  }
}

INSTANTIATE_TEST_SUITE_P(
    Cases, BadJobFile,
    ::testing::Values(
        BadJob{"unknown key", "count = 20", "count = 20\ncolour = 3", "'districts.colour': unknown key"},
        BadJob{"unknown section", "[verdict]", "[verdikt]", "'verdikt': unknown key"},
        BadJob{"declared not strings", "declared = [\"cut_edges\"", "declared = [3", "'compare.declared'"},
        BadJob{"unknown compare key", "[compare]", "[compare]\nchosen = 1", "'compare.chosen': unknown key"},
        BadJob{"min_records too small", "min_records = 300", "min_records = 4", "'verdict.min_records'"},
        BadJob{"wrong type", "count = 20", "count = \"20\"", "'districts.count': must be a whole number"},
        BadJob{"out of range", "population_tolerance = 0.02", "population_tolerance = 1.5",
               "'rules.population_tolerance'"},
        BadJob{"the earlier key name", "population_tolerance = 0.02", "population_deviation = 0.02",
               "'rules.population_deviation': is now called population_tolerance"},
        BadJob{"negative chains", "chains = 8", "chains = -1", "'sampler.chains'"},
        BadJob{"unknown kernel", "\"merge-split\"", "\"annealing\"", "unknown kernel"},
        BadJob{"missing id", "id = \"unit\"\n", "", "'map.id': required key is missing"},
        BadJob{"burn-in too long", "burn_in = 1000", "burn_in = 5000", "'sampler.burn_in'"},
        BadJob{"group not in map", "group = \"grp\"", "group = \"other\"", "not listed in map.groups"},
        BadJob{"party/column mismatch", "columns = [\"gov_a\", \"gov_b\"]", "columns = [\"gov_a\"]",
               "'map.elections.columns'"},
        BadJob{"syntax", "count = 20", "count = = 20", "not valid TOML"},
        BadJob{"one district", "count = 20", "count = 1",
               "'districts.count': is 1; a plan needs at least 2 districts; set districts.count to 2 or more"},
        BadJob{"no districts", "count = 20", "count = 0", "'districts.count': is 0; a plan needs at least 2"},
        BadJob{"whole float", "count = 20", "count = 2e1", "'districts.count': must be a whole number written as an integer"},
        BadJob{"whole float names digits", "chains = 8", "chains = 8.0", "write 8 (digit groups"},
        BadJob{"huge float", "chains = 8", "chains = 1e19", "'sampler.chains': must be a whole number"},
        BadJob{"starts without a start plan", "count = 20", "count = 20\nstarts = \"mixed\"",
               "'districts.starts': is \"mixed\" but districts.start gives no plan"},
        BadJob{"unknown starts", "count = 20", "count = 20\nstart = \"plan.csv\"\nstarts = \"spread\"",
               "'districts.starts': unknown value 'spread'"},
        BadJob{"tempering needs hottest_beta", "[verdict]", "[tempering]\nrungs = 4\n[verdict]",
               "'tempering.hottest_beta': required key is missing"},
        BadJob{"unknown measures key", "[verdict]", "[measures]\nsplits = true\n[verdict]", "'measures.splits': unknown key"},
        BadJob{"measured election not in map", "[verdict]", "[measures]\nelections = [\"sen\"]\n[verdict]",
               "'measures.elections': 'sen' is not an election"},
        BadJob{"municipality splits without codes", "[verdict]", "[measures]\nmunicipality_splits = true\n[verdict]",
               "'measures.municipality_splits': municipality splits need municipality codes"},
        BadJob{"threshold outside [0, 1]", "[verdict]",
               "[[measures.groups]]\ngroup = \"grp\"\nthresholds = [1.5]\n[verdict]", "'measures.groups.thresholds'"},
        BadJob{"group measured twice", "[verdict]",
               "[[measures.groups]]\ngroup = \"grp\"\n[[measures.groups]]\ngroup = \"grp\"\n[verdict]",
               "'measures.groups.group': 'grp' is measured twice"},
        BadJob{"judge not a list", "min_records = 300", "min_records = 300\njudge = \"energy\"",
               "'verdict.judge': must be a list of strings"},
        // Issue 16: a weight recombination cannot honour is refused, naming the key and the kernels that can.
        BadJob{"cut weight with recombination", "\"merge-split\"", "\"recombination\"",
               "'rules.weights.cut_edges': a soft weight, but sampler.kernel recombination has no target law"},
        BadJob{"town limit without codes", "county_splits_max = 5", "municipality_pieces_max = 5",
               "'rules.municipality_pieces_max': a municipality limit needs municipality codes"},
        BadJob{"county districts 0", "county_splits_max = 5", "county_districts_max = 0",
               "'rules.county_districts_max': is 0, outside 1..65534"},
        BadJob{"range negative", "county_splits_max = 5", "population_range_max = -0.1",
               "'rules.population_range_max'"},
        BadJob{"group term doing nothing", "weight = 1.5", "",
               "'rules.group_share.group': the term for 'grp' has no weight, at_least or at_most"},
        BadJob{"at_least above at_most", "weight = 1.5", "at_least = 3\nat_most = 2",
               "'rules.group_share.at_least': is above at_most"},
        BadJob{"at_least above k", "weight = 1.5", "at_least = 21",
               "'rules.group_share.at_least': asks for more districts than the plan has (20)"},
        // Tree weights: at least 1, a number, and only for kernels that draw trees.
        BadJob{"tree weight below 1", "beta = 2.0", "beta = 2.0\ntree_weight_county = 0.5",
               "'sampler.tree_weight_county': is 0.5"},
        BadJob{"tree weight not a number", "beta = 2.0", "beta = 2.0\ntree_weight_municipality = \"high\"",
               "'sampler.tree_weight_municipality': must be a number"},
        BadJob{"tree weight with flip", "\"merge-split\"", "\"flip\"\ntree_weight_county = 3.0",
               "'sampler.tree_weight_county': the flip kernel draws no spanning trees"},
        // Split only as needed.
        BadJob{"county splits word", "county_splits_max = 5", "county_splits_max = \"least\"",
               "'rules.county_splits_max': must be a whole number or \"fewest\""},
        BadJob{"fewest attempts without fewest", "county_splits_max = 5", "county_splits_max = 5\nfewest_splits_attempts = 9",
               "'rules.fewest_splits_attempts': only counts with county_splits_max = \"fewest\""},
        BadJob{"fewest attempts 0", "county_splits_max = 5", "county_splits_max = \"fewest\"\nfewest_splits_attempts = 0",
               "'rules.fewest_splits_attempts': is 0, outside 1..100000"}),
    [](const auto& info) {
      std::string name = info.param.name;
      for (char& ch : name)
        if (!std::isalnum(static_cast<unsigned char>(ch))) ch = '_';
      return name;
    });

// Issue 16: every soft weight is refused with recombination, by key and line, naming the kernels
// that honour it; hard limits are read and kept with every kernel.
TEST(JobFile, SoftWeightsNeedAKernelWithATargetAndLimitsAreRead) {
  const auto refused = [](std::string text, const std::string& key) {
    text.replace(text.find("\"merge-split\""), 13, "\"recombination\"");
    try {
      (void)parse_job_text(text, "w.toml");
      ADD_FAILURE() << "accepted a weight on " << key;
    } catch (const InputError& e) {
      EXPECT_EQ(e.where().column, key) << e.what();
      EXPECT_GT(e.where().line, 0u);
      EXPECT_NE(std::string(e.what()).find("set sampler.kernel to \"merge-split\" or \"flip\""), std::string::npos)
          << e.what();
    }
  };
  std::string text = kGood;
  refused(text, "rules.weights.cut_edges");
  text.replace(text.find("cut_edges = 0.5"), 15, "county_splits = 2");
  refused(text, "rules.weights.county_splits");
  text.replace(text.find("county_splits = 2"), 17, "cut_edges = 0");
  refused(text, "rules.group_share.weight");
  // Without the group weight, a hard at_least stays and recombination is fine.
  text.replace(text.find("weight = 1.5"), 12, "at_least = 2\nat_most = 4");
  text.replace(text.find("county_splits_max = 5"), 21,
               "county_splits_max = 5\ncounty_pieces_max = 30\ncounty_districts_max = 2\npopulation_range_max = 0.1");
  text.replace(text.find("\"merge-split\""), 13, "\"recombination\"");
  const JobSpec job = parse_job_text(text, "ok.toml");
  EXPECT_EQ(job.rules.county_pieces_max, 30);
  EXPECT_EQ(job.rules.county_districts_max, 2);
  EXPECT_EQ(job.rules.municipality_splits_max, -1);
  EXPECT_DOUBLE_EQ(job.rules.population_range_max, 0.1);
  ASSERT_EQ(job.rules.group_share.size(), 1u);
  EXPECT_EQ(job.rules.group_share[0].at_least, 2);
  EXPECT_EQ(job.rules.group_share[0].at_most, 4);
  EXPECT_EQ(job.rules.group_share[0].weight, 0.0);
}

// [measures] and verdict.judge as written; left out, the lists stay unset (the defaults of
// job_measures.hpp, every observable judged).
TEST(JobFile, MeasuresAndJudgeKeys) {
  std::string text = kGood;
  text.replace(text.find("[verdict]"), 9,
               "[measures]\nelections = [\"gov\"]\ncompetitive = [0.4, 0.6]\ncounty_splits = false\n"
               "[[measures.groups]]\ngroup = \"grp\"\ndenominator = \"grp\"\nthresholds = [0.3, 0.5]\n"
               "[verdict]\njudge = [\"energy\"]");
  const JobSpec job = parse_job_text(text, "job.toml");
  EXPECT_EQ(job.measures.elections, std::vector<std::string>{"gov"});
  EXPECT_EQ(job.measures.competitive_low, 0.4);
  EXPECT_EQ(job.measures.competitive_high, 0.6);
  EXPECT_EQ(job.measures.county_splits, false);
  EXPECT_FALSE(job.measures.municipality_splits.has_value());
  ASSERT_TRUE(job.measures.groups.has_value());
  ASSERT_EQ(job.measures.groups->size(), 1U);
  EXPECT_EQ((*job.measures.groups)[0].denominator, "grp");
  EXPECT_EQ((*job.measures.groups)[0].thresholds, (std::vector<double>{0.3, 0.5}));
  EXPECT_EQ(job.verdict_judge, std::vector<std::string>{"energy"});
  EXPECT_GT(job.verdict_judge_line, 0U);
  const JobSpec plain = parse_job_text(kGood, "job.toml");
  EXPECT_FALSE(plain.measures.elections || plain.measures.groups || plain.verdict_judge);
}

// With a start plan, chain 0 starts there and the others from random seed plans unless the job
// says otherwise; without one every chain starts from a random seed plan.
TEST(JobFile, ChainStartsDefaultToMixedWithAStartPlan) {
  std::string text = kGood;
  EXPECT_EQ(parse_job_text(text, "job.toml").starts, ChainStarts::random);
  text.replace(text.find("count = 20"), 10, "count = 20\nstart = \"plan.csv\"");
  EXPECT_EQ(parse_job_text(text, "job.toml").starts, ChainStarts::mixed);
  text.replace(text.find("start = \"plan.csv\""), 18, "start = \"plan.csv\"\nstarts = \"given\"");
  EXPECT_EQ(parse_job_text(text, "job.toml").starts, ChainStarts::given);
}

TEST(JobFile, MissingAndEmptyFilesAreNamed) {
  EXPECT_THROW((void)load_job("does/not/exist.toml"), InputError);
  const auto path = std::filesystem::temp_directory_path() / "planmill_empty_job.toml";
  std::ofstream(path) << "\n  \n";
  try {
    (void)load_job(path.string());
    FAIL();
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("empty"), std::string::npos);
  }
  std::filesystem::remove(path);
}

}  // namespace
}  // namespace planmill
