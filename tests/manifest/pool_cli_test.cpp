// `planmill pool` as a lab uses it on an array job's pieces: runs of one job with distinct seeds
// pooled into one folder that export, diagnose, compare and merge read as one ensemble, every
// chain's plans those of its piece; refused, naming the difference and writing nothing, when a
// seed, a rule or the map differs; a piece left out only with --drop and --reason, recorded.
#include <gtest/gtest.h>
#include <unistd.h>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "run_jobs.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using nlohmann::json;
const std::string kBin = PLANMILL_BINARY;

// The job of write_synth_job with `from` replaced by `to`, as dir/state/<name>.toml.
fs::path variant(const fs::path& job, const std::string& name, const std::string& from, const std::string& to) {
  std::string text = test::read_text(job);
  const auto at = text.find(from);
  EXPECT_NE(at, std::string::npos) << from;
  text.replace(at, from.size(), to);
  const fs::path out = job.parent_path() / (name + ".toml");
  std::ofstream(out) << text;
  return out;
}

void run_job(const fs::path& job, const fs::path& out) {
  ASSERT_EQ(test::shell(kBin + " run " + job.string() + " --output " + out.string() + " --quiet >/dev/null 2>&1"), 0);
}

// Exit status of `planmill pool ARGS`, its stderr in *err.
int pool(const std::string& args, std::string* err = nullptr) {
  const std::string log = (fs::temp_directory_path() / ("planmill-pool-stderr-" + std::to_string(::getpid()) + ".txt")).string();
  const int status = test::shell(kBin + " pool " + args + " >/dev/null 2>" + log);
  if (err != nullptr) *err = test::read_text(log);
  return status;
}

std::string sha256_of(const fs::path& file) {  // coreutils' sha256sum, outside planmill
  const fs::path out = file.string() + ".sha";
  EXPECT_EQ(test::shell("sha256sum '" + file.string() + "' | cut -d' ' -f1 > '" + out.string() + "'"), 0);
  std::string text = test::read_text(out);
  return text.substr(0, text.find('\n'));
}

// CSV lines of a file, the first (header) included.
std::vector<std::string> lines_of(const fs::path& file) {
  std::vector<std::string> out;
  std::ifstream in(file);
  for (std::string line; std::getline(in, line);) out.push_back(line);
  return out;
}

class PoolCli : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    // One folder per process: ctest runs each test of the suite as its own process, two at a time,
    // and a shared folder made them fail in their set-up (which gtest reports as skipped).
    dir_ = test::scratch_dir("planmill-pool", "pieces-" + std::to_string(::getpid()));
    job_ = test::write_synth_job(dir_, "chains = 2\nsteps = 400\nburn_in = 20\nrecord_every = 5\nseed = 3");
    run_job(job_, dir_ / "a");
    run_job(variant(job_, "seed4", "seed = 3", "seed = 4"), dir_ / "b");
    run_job(variant(job_, "seed3", "seed = 3", "seed = 3\n# the same seed"), dir_ / "c");
    run_job(variant(job_, "tighter", "population_tolerance = 0.05", "population_tolerance = 0.04"), dir_ / "d");
  }
  static void TearDownTestSuite() { fs::remove_all(dir_); }
  static fs::path dir_, job_;
};
fs::path PoolCli::dir_, PoolCli::job_;

TEST_F(PoolCli, PiecesBecomeOneEnsembleWhoseChainsAreThePiecesChains) {
  const fs::path p = dir_ / "pool";
  ASSERT_EQ(pool(p.string() + " " + (dir_ / "a").string() + " " + (dir_ / "b").string()), 0);

  const json record = json::parse(test::read_text(p / "pool.json"));
  ASSERT_EQ(record["pieces"].size(), 2U);
  EXPECT_EQ(record["pieces"][0]["seed"], 3);
  EXPECT_EQ(record["pieces"][1]["seed"], 4);
  EXPECT_EQ(record["pieces"][1]["path"], "../b");
  EXPECT_EQ(record["pieces"][0]["run_state_sha256"], sha256_of(dir_ / "a" / "run-state.json"));
  EXPECT_EQ(record["pieces"][1]["plan_files"].size(),
            json::parse(test::read_text(dir_ / "b" / "run-state.json"))["files"].size());
  EXPECT_TRUE(record["dropped"].empty());
  EXPECT_EQ(record["pieces"][1]["chains"][1]["chain"], 3);
  EXPECT_EQ(record["pieces"][1]["chains"][1]["index_in_piece"], 1);

  // Export: pool chain 2 + c is chain c of piece b, plan for plan and observable for observable.
  ASSERT_EQ(test::shell(kBin + " export " + p.string() + " --out " + (dir_ / "pool-csv").string() +
                        " --every 1 --plan-layout wide >/dev/null"), 0);
  ASSERT_EQ(test::shell(kBin + " export " + (dir_ / "b").string() + " --out " + (dir_ / "b-csv").string() +
                        " --every 1 --plan-layout wide >/dev/null"), 0);
  const auto pooled = lines_of(dir_ / "pool-csv" / "observables.csv");
  const auto own = lines_of(dir_ / "b-csv" / "observables.csv");
  ASSERT_EQ(own.size(), 1 + 2 * 76U);  // steps 25..400 by 5 on 2 chains
  ASSERT_EQ(pooled.size(), 1 + 4 * 76U);
  for (std::size_t i = 1; i < own.size(); ++i) {
    const auto mine = test::split_csv_line(own[i]), there = test::split_csv_line(pooled[2 * 76 + i]);
    EXPECT_EQ(std::stoi(there[0]), std::stoi(mine[0]) + 2);
    EXPECT_EQ(std::vector(there.begin() + 1, there.end()), std::vector(mine.begin() + 1, mine.end()));
  }
  const auto wide_pool = lines_of(dir_ / "pool-csv" / "plans-wide.csv");
  const auto wide_b = lines_of(dir_ / "b-csv" / "plans-wide.csv");
  const auto header_pool = test::split_csv_line(wide_pool[0]);
  const auto header_b = test::split_csv_line(wide_b[0]);
  const auto column = [](const std::vector<std::string>& h, const std::string& name) {
    return static_cast<std::size_t>(std::find(h.begin(), h.end(), name) - h.begin());
  };
  const std::size_t in_pool = column(header_pool, "c3_r40"), in_b = column(header_b, "c1_r40");
  ASSERT_LT(in_pool, header_pool.size());
  ASSERT_LT(in_b, header_b.size());
  for (std::size_t u = 1; u < wide_b.size(); ++u)
    EXPECT_EQ(test::split_csv_line(wide_pool[u])[in_pool], test::split_csv_line(wide_b[u])[in_b]) << u;

  // Diagnose, merge and compare see four chains.
  const fs::path diag = dir_ / "pool-diagnose.json";
  const int d = test::shell(kBin + " diagnose " + p.string() + " --json " + diag.string() + " >/dev/null");
  EXPECT_TRUE(d == 0 || d == 3) << d;
  EXPECT_EQ(json::parse(test::read_text(diag))["chains"].size(), 4U);
  ASSERT_EQ(test::shell(kBin + " merge " + p.string() + " >/dev/null"), 0);
  const json manifest = json::parse(test::read_text(p / "manifest.json"));
  EXPECT_EQ(manifest["totals"]["chains"], 4);
  EXPECT_EQ(manifest["chains"][2]["index_in_piece"], 0);
  EXPECT_EQ(manifest["pool"]["pieces"][1]["run_state_now"], "matches");
  // Pieces have seeds of their own: the blind check is each piece's (planmill merge PIECE).
  EXPECT_EQ(manifest["blind_check"]["result"], "not checked");
  EXPECT_NE(manifest["blind_check"]["why"].get<std::string>().find("a pool of runs"), std::string::npos);
  ASSERT_EQ(test::shell(kBin + " export " + (dir_ / "b").string() + " --out " + (dir_ / "b-plan").string() +
                        " --plans 0:0 >/dev/null"), 0);
  const fs::path cmp = dir_ / "pool-compare.json";
  const int c = test::shell(kBin + " compare " + p.string() + " " +
                            (dir_ / "b-plan" / "plans" / "chain-0-record-0.csv").string() + " --json " +
                            cmp.string() + " >/dev/null 2>&1");
  ASSERT_TRUE(c == 0 || c == 3) << c;  // 3: the verdict fails on so short a run
  EXPECT_EQ(json::parse(test::read_text(cmp))["ensemble"]["chains"].size(), 4U);
  const fs::path html = dir_ / "pool-report.html";
  const int r = test::shell(kBin + " report " + p.string() + " --plan " +
                            (dir_ / "b-plan" / "plans" / "chain-0-record-0.csv").string() + " --out " +
                            html.string() + " >/dev/null 2>&1");
  EXPECT_TRUE(r == 0 || r == 3) << r;  // 3: the verdict fails on so short a run
  EXPECT_GT(fs::file_size(html), 10000U);

  // A pool is read, never resumed.
  EXPECT_EQ(test::shell(kBin + " run " + job_.string() + " --output " + p.string() + " --resume --quiet 2>" +
                        (dir_ / "resume.txt").string()),
            2);
  EXPECT_NE(test::read_text(dir_ / "resume.txt").find("is a pool of runs"), std::string::npos);
}

TEST_F(PoolCli, RefusesPiecesThatDifferNamingTheDifferenceAndWritesNothing) {
  std::string err;
  const std::string a = (dir_ / "a").string();
  EXPECT_EQ(pool((dir_ / "no1").string() + " " + a + " " + (dir_ / "c").string(), &err), 2);
  EXPECT_NE(err.find("sampler.seed"), std::string::npos) << err;
  EXPECT_NE(err.find("same plans"), std::string::npos) << err;
  EXPECT_EQ(pool((dir_ / "no2").string() + " " + a + " " + (dir_ / "d").string(), &err), 2);
  EXPECT_NE(err.find("rules.population_tolerance"), std::string::npos) << err;
  // Numbers as written (the shortest text that reads back as the same double), not 0.04000000000000001.
  EXPECT_NE(err.find("is 0.04 here and 0.05 in"), std::string::npos) << err;
  EXPECT_FALSE(fs::exists(dir_ / "no1"));
  EXPECT_FALSE(fs::exists(dir_ / "no2"));

  // The same job text on another map: the unit table changed in a copy of the state.
  const fs::path other = dir_ / "other";
  fs::create_directories(other);
  fs::copy(dir_ / "state", other / "state", fs::copy_options::recursive);
  std::string units = test::read_text(other / "state" / "units.csv");
  const auto second_line = units.find('\n') + 1;
  units.insert(units.find(',', second_line) + 1, "1");  // the first unit's next column, another number
  std::ofstream(other / "state" / "units.csv") << units;
  const fs::path job = variant(other / "state" / "job.toml", "job5", "seed = 3", "seed = 5");
  run_job(job, dir_ / "e");
  EXPECT_EQ(pool((dir_ / "no3").string() + " " + a + " " + (dir_ / "e").string(), &err), 2);
  EXPECT_NE(err.find("units file"), std::string::npos) << err;
  EXPECT_FALSE(fs::exists(dir_ / "no3"));
}

// A piece drawn by another build (its run state says so: here the compiler is edited in a copy)
// may draw other plans from the same seed, so it is refused unless the user allows it.
TEST_F(PoolCli, APieceOfAnotherBuildIsRefusedUnlessAllowedAndThenRecorded) {
  const fs::path copy = dir_ / "b-other-build";
  fs::copy(dir_ / "b", copy, fs::copy_options::recursive);
  json state = json::parse(test::read_text(copy / "run-state.json"));
  ASSERT_FALSE(state.at("builds").empty());
  state["builds"][0]["compiler"] = "GCC 0.0.1";
  std::ofstream(copy / "run-state.json", std::ios::trunc) << state.dump(2);
  std::string err;
  const std::string a = (dir_ / "a").string();
  EXPECT_EQ(pool((dir_ / "mixed-no").string() + " " + a + " " + copy.string(), &err), 2);
  EXPECT_NE(err.find("'builds': was drawn by another build"), std::string::npos) << err;
  EXPECT_NE(err.find("compiler: 'GCC 0.0.1' here"), std::string::npos) << err;
  EXPECT_NE(err.find("--allow-other-builds"), std::string::npos) << err;
  EXPECT_FALSE(fs::exists(dir_ / "mixed-no"));

  ASSERT_EQ(pool((dir_ / "mixed").string() + " " + a + " " + copy.string() + " --allow-other-builds", &err), 0) << err;
  EXPECT_TRUE(json::parse(test::read_text(dir_ / "mixed" / "pool.json")).at("mixed_builds").get<bool>());
  EXPECT_EQ(json::parse(test::read_text(dir_ / "mixed" / "run-state.json")).at("builds").size(), 2U);
  ASSERT_EQ(pool((dir_ / "one-build").string() + " " + a + " " + (dir_ / "b").string(), &err), 0) << err;
  EXPECT_FALSE(json::parse(test::read_text(dir_ / "one-build" / "pool.json")).at("mixed_builds").get<bool>());
}

TEST_F(PoolCli, APieceIsLeftOutOnlyByAnExplicitDropWithItsReason) {
  std::string err;
  const std::string pieces = (dir_ / "a").string() + " " + (dir_ / "b").string() + " " + (dir_ / "c").string();
  EXPECT_EQ(pool((dir_ / "no4").string() + " " + pieces + " --drop " + (dir_ / "c").string(), &err), 2);
  EXPECT_NE(err.find("--reason"), std::string::npos) << err;
  EXPECT_EQ(pool((dir_ / "no5").string() + " " + (dir_ / "a").string() + " --drop " + (dir_ / "c").string() +
                     " --reason x", &err),
            2);
  EXPECT_NE(err.find("is not one of the pieces"), std::string::npos) << err;

  const fs::path p = dir_ / "pool-dropped";
  ASSERT_EQ(pool(p.string() + " " + pieces + " --drop " + (dir_ / "c").string() + " --reason 'repeats the seed of a'",
                 &err),
            0) << err;
  const json record = json::parse(test::read_text(p / "pool.json"));
  EXPECT_EQ(record["pieces"].size(), 2U);
  ASSERT_EQ(record["dropped"].size(), 1U);
  EXPECT_EQ(record["dropped"][0]["reason"], "repeats the seed of a");
  EXPECT_EQ(record["dropped"][0]["path"], "../c");
  EXPECT_EQ(record["dropped"][0]["run_state_sha256"], sha256_of(dir_ / "c" / "run-state.json"));
  EXPECT_EQ(json::parse(test::read_text(p / "run-state.json"))["chains"].size(), 4U);
  EXPECT_EQ(pool(p.string() + " " + pieces, &err), 2) << "a pool folder is not written over";
}

}  // namespace
}  // namespace planmill
