// The [tempering] section of the job file: every key read, a ladder set up from it, and each
// mistake an InputError naming the key and its line.
#include <gtest/gtest.h>

#include <string>

#include "planmill/base/error.hpp"
#include "planmill/temper/job_ladder.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

std::string job_text(const std::string& sampler, const std::string& tempering) {
  return "[map]\nunits = \"u.csv\"\nadjacency = \"a.csv\"\nid = \"unit\"\npopulation = \"pop\"\n"
         "[districts]\ncount = 3\n"
         "[sampler]\n" +
         sampler + "\n" + tempering;
}

const std::string kSampler =
    "kernel = \"flip\"\nbeta = 2.0\nsteps = 1000\nburn_in = 100\nchains = 3\nseed = 9";

TEST(TemperingSection, AbsentMeansNoTempering) {
  EXPECT_FALSE(parse_job_text(job_text(kSampler, ""), "job.toml").tempering.enabled);
}

TEST(TemperingSection, GeometricLadderFromRungsAndHottestBeta) {
  const JobSpec job =
      parse_job_text(job_text(kSampler,
                              "[tempering]\nrungs = 5\nhottest_beta = 0.02\nswap_every = 7\ntune = "
                              "true\nrecord = \"all\"\n"),
                     "job.toml");
  const TemperingSpec& t = job.tempering;
  EXPECT_TRUE(t.enabled);
  EXPECT_EQ(t.rungs, 5u);
  EXPECT_EQ(t.hottest_beta, 0.02);
  EXPECT_EQ(t.swap_every, 7u);
  EXPECT_TRUE(t.tune);
  EXPECT_EQ(t.record, TemperingRecord::all);
  EXPECT_EQ(ladder_betas(job), geometric_betas(2.0, 0.02, 5));

  const GraphHandle graph_handle = share_graph(test::grid(3, 3));

  const UnitGraph& graph = *graph_handle;
  const LadderSetup setup = make_ladder_setup(job, graph_handle, RuleSet{}, 2);
  EXPECT_EQ(setup.ladder_index, 2u);
  EXPECT_EQ(setup.first_chain_index, 10u);  // ladder 2 of 5 rungs: chains 10..14
  EXPECT_EQ(setup.swap_every, 7u);
  EXPECT_EQ(setup.chain.run_seed, 9u);
  EXPECT_EQ(setup.chain.kernel.kind, KernelKind::flip);
}

TEST(TemperingSection, ListedBetasDefaults) {
  const JobSpec job =
      parse_job_text(job_text(kSampler, "[tempering]\nbetas = [2.0, 1, 0.25, 0]\n"), "job.toml");
  EXPECT_EQ(job.tempering.rungs, 4u);
  EXPECT_EQ(ladder_betas(job), (std::vector<double>{2.0, 1.0, 0.25, 0.0}));
  EXPECT_EQ(job.tempering.swap_every, 10u);
  EXPECT_FALSE(job.tempering.tune);
  EXPECT_EQ(job.tempering.record, TemperingRecord::target);
}

struct BadTempering {
  const char* name;
  std::string sampler;
  std::string section;
  std::size_t offset;  // line of the offending key, counted from the [tempering] line
  const char* expect;
};

class BadTemperingSection : public ::testing::TestWithParam<BadTempering> {};

// job_text() puts [tempering] on line 15 when the sampler has six lines, as all cases here do.
constexpr std::size_t kTemperingLine = 15;

TEST_P(BadTemperingSection, IsAnInputErrorWithItsLine) {
  const auto& c = GetParam();
  try {
    (void)parse_job_text(job_text(c.sampler, c.section), "job.toml");
    FAIL() << "accepted: " << c.name;
  } catch (const InputError& e) {
    const std::string message = e.what();
    EXPECT_EQ(e.where().line, kTemperingLine + c.offset) << message;
    EXPECT_NE(message.find(c.expect), std::string::npos) << message;
  }
}

INSTANTIATE_TEST_SUITE_P(
    Cases, BadTemperingSection,
    ::testing::Values(
        BadTempering{"unknown key", kSampler,
                     "[tempering]\nrungs = 4\nhottest_beta = 0.1\nladders = 2\n", 3,
                     "'tempering.ladders': unknown key"},
        BadTempering{"rungs missing", kSampler, "[tempering]\nhottest_beta = 0.1\n", 0,
                     "'tempering.rungs'"},
        BadTempering{"one rung", kSampler, "[tempering]\nrungs = 1\nhottest_beta = 0.1\n", 1,
                     "'tempering.rungs'"},
        BadTempering{"hottest above target", kSampler,
                     "[tempering]\nrungs = 4\nhottest_beta = 3.0\n", 2,
                     "strictly between 0 and the target"},
        BadTempering{"hottest zero", kSampler, "[tempering]\nrungs = 4\nhottest_beta = 0\n", 2,
                     "list betas"},
        BadTempering{"both forms", kSampler, "[tempering]\nbetas = [2.0, 1.0]\nrungs = 2\n", 2,
                     "conflicts"},
        BadTempering{"betas not decreasing", kSampler, "[tempering]\nbetas = [2.0, 1.0, 1.0]\n", 1,
                     "decrease strictly"},
        BadTempering{"betas not numbers", kSampler, "[tempering]\nbetas = [2.0, \"hot\"]\n", 1,
                     "list of numbers"},
        BadTempering{"first beta not the target", kSampler, "[tempering]\nbetas = [1.0, 0.5]\n", 1,
                     "sampler.beta = 2"},
        BadTempering{"swap_every zero", kSampler,
                     "[tempering]\nrungs = 3\nhottest_beta = 0.5\nswap_every = 0\n", 3,
                     "'tempering.swap_every'"},
        BadTempering{"tune not boolean", kSampler,
                     "[tempering]\nrungs = 3\nhottest_beta = 0.5\ntune = \"yes\"\n", 3,
                     "true or false"},
        BadTempering{
            "tune without burn-in",
            "kernel = \"flip\"\nbeta = 2.0\nsteps = 1000\nburn_in = 0\nchains = 3\nseed = 9",
            "[tempering]\nrungs = 3\nhottest_beta = 0.5\ntune = true\n", 3, "burn_in is 0"},
        BadTempering{"record", kSampler,
                     "[tempering]\nrungs = 3\nhottest_beta = 0.5\nrecord = \"hot\"\n", 3,
                     "\"target\" or \"all\""},
        BadTempering{"recombination",
                     "kernel = \"recombination\"\nbeta = 2.0\nsteps = 1000\nburn_in = 100\nchains "
                     "= 3\nseed = 9",
                     "[tempering]\nrungs = 3\nhottest_beta = 0.5\n", 0,
                     "recombination ignores beta"}),
    [](const auto& info) {
      std::string name = info.param.name;
      for (char& ch : name)
        if (!std::isalnum(static_cast<unsigned char>(ch))) ch = '_';
      return name;
    });

}  // namespace
}  // namespace planmill
