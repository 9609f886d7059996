// The measures a run records with every plan: `planmill run` on a synth job with a [measures]
// section, then every stored record against a fresh MeasureEvaluator on the stored plan (read
// back through RunReader, its splits recounted from the labels rather than taken from the
// chain's tallies); and the job keys of [measures] and verdict.judge refused with file:line.
#include <gtest/gtest.h>

#include <algorithm>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "planmill/io/csv.hpp"
#include "planmill/job/job_rules.hpp"
#include "planmill/job/loaded_job.hpp"
#include "planmill/run/observables.hpp"
#include "planmill/run/run_reader.hpp"
#include "../support/run_jobs.hpp"
#include "../support/run_processes.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

bool same_bits(double a, double b) { return std::memcmp(&a, &b, sizeof a) == 0; }

// A voting-age count per unit, 3/4 of its population rounded down plus its group count's parity,
// so that group shares of it differ from shares of total population.
void add_vap_column(const fs::path& units) {
  const CsvTable table = read_csv_file(units.string());
  const std::size_t pop = table.column_index("pop"), grp = table.column_index("grp");
  std::ofstream out(units, std::ios::trunc);
  for (std::size_t c = 0; c < table.header.size(); ++c) out << table.header[c] << ",";
  out << "vap\n";
  for (const CsvRow& row : table.rows) {
    for (const auto& f : row.fields) out << f << ",";
    const long p = std::stol(row.fields[pop]), g = std::stol(row.fields[grp]);
    out << (p * 3 / 4 + g % 2) << "\n";
  }
}

// synth's job with a vap column in map.groups and the given [measures] (and more) appended.
fs::path measures_job(const fs::path& dir, const std::string& sampler, const std::string& tail) {
  const fs::path job = test::write_synth_job(dir, sampler);
  add_vap_column(dir / "state" / "units.csv");
  std::string text = test::read_text(job);
  const std::string groups = "groups = [\"grp\"]";
  const auto at = text.find(groups);
  EXPECT_NE(at, std::string::npos) << text;
  text.replace(at, groups.size(), "groups = [\"grp\", \"vap\"]");
  std::ofstream(job, std::ios::trunc) << text << tail;
  return job;
}

std::string run_command(const fs::path& job, const fs::path& out) {
  return test::mpiexec_prefix(1) + PLANMILL_BINARY + " run " + job.string() + " --output " + out.string() +
         " --quiet >" + out.string() + ".log 2>&1";
}

constexpr const char* kMeasures =
    "[measures]\nelections = [\"gov\", \"sen\"]\ncompetitive = [0.4, 0.6]\n"
    "[[measures.groups]]\ngroup = \"grp\"\nthresholds = [0.5, 0.3]\n"
    "[[measures.groups]]\ngroup = \"grp\"\ndenominator = \"vap\"\nthresholds = [0.4]\n";

TEST(RunMeasures, EveryStoredRecordEqualsAFreshEvaluatorOnItsStoredPlan) {
  const auto dir = test::scratch_dir("planmill-run-measures", "stored");
  const fs::path job = measures_job(dir, "chains = 2\nsteps = 400\nburn_in = 10\nrecord_every = 3\nseed = 8", kMeasures);
  ASSERT_EQ(test::shell(run_command(job, dir / "out")), 0) << test::read_text(dir / "out.log");

  const LoadedJob loaded = load_and_check_job(job.string());
  const RuleSet rules = make_rule_set(loaded.job.rules, *loaded.graph, job.string());
  const std::size_t k = loaded.job.districts;
  MeasureEvaluator fresh(loaded.graph, k, loaded.measures);
  const RunReader reader((dir / "out").string());
  ASSERT_EQ(reader.observable_names(), observable_names(*loaded.graph, rules, fresh));
  ASSERT_EQ(reader.sorted_names(), fresh.vector_names());
  // No number under two names: the chain's own observables, then the measures.
  const auto& names = reader.observable_names();
  ASSERT_EQ(names[0], "population_deviation");
  ASSERT_EQ(names[1], "energy");
  for (const char* name : {"election.sen.seats.A", "election.gov.competitive_districts",
                           "group.grp.districts_above_0.3", "group.grp_of_vap.districts_above_0.4",
                           "compactness.cut_edges", "splits.county_pieces"})
    EXPECT_EQ(std::count(names.begin(), names.end(), name), 1) << name;
  for (const char* old : {"cut_edges", "county_splits", "seats.gov.A"})
    EXPECT_EQ(std::count(names.begin(), names.end(), old), 0) << old;
  ASSERT_EQ(fresh.vector_names().size(), 4U);  // 2 elections, 2 groups

  const std::size_t width = names.size(), first = 2;  // no group-share rule terms in this job
  std::size_t records = 0, differing_vectors = 0;
  for (const auto c : reader.chains()) {
    const std::vector<double> rows = reader.read_observables(c);
    std::vector<std::vector<double>> sorted;
    for (const auto& name : reader.sorted_names()) sorted.push_back(reader.read_sorted(c, name));
    ASSERT_EQ(rows.size(), reader.record_count(c) * width);
    reader.for_each_plan(c, 0, reader.record_count(c) - 1, [&](std::uint64_t r, std::span<const DistrictIndex> labels) {
      const Plan plan(loaded.graph, k, std::vector<DistrictIndex>(labels.begin(), labels.end()));
      fresh.evaluate(plan);  // splits recounted from the labels
      const double* row = rows.data() + r * width;
      EXPECT_TRUE(same_bits(row[0], plan.max_population_deviation())) << "record " << r;
      for (std::size_t s = 0; s < fresh.scalars().size(); ++s)
        ASSERT_TRUE(same_bits(row[first + s], fresh.scalars()[s]))
            << names[first + s] << " chain " << c << " record " << r << ": " << row[first + s] << " vs "
            << fresh.scalars()[s];
      for (std::size_t v = 0; v < sorted.size(); ++v) {
        for (std::size_t i = 0; i < k; ++i)
          ASSERT_TRUE(same_bits(sorted[v][r * k + i], fresh.sorted_vector(v)[i]))
              << fresh.vector_names()[v] << "[" << i << "] chain " << c << " record " << r;
      }
      // The voting-age shares are not the population shares (else the denominator did nothing).
      differing_vectors += !same_bits(fresh.sorted_vector(2)[k - 1], fresh.sorted_vector(3)[k - 1]);
      ++records;
    });
  }
  EXPECT_EQ(records, 2U * 130);  // steps 12, 15, ..., 399 after burn-in 10
  EXPECT_GT(differing_vectors, records / 2);

  // The manifest lists what was measured, and says the run read group and vote columns.
  ASSERT_EQ(test::shell(std::string(PLANMILL_BINARY) + " merge " + (dir / "out").string() + " >/dev/null 2>&1"), 0);
  const auto m = nlohmann::json::parse(test::read_text(dir / "out" / "manifest.json"));
  EXPECT_EQ(m["sorted"], nlohmann::json(fresh.vector_names()));
  EXPECT_EQ(m["measures"]["scalars"], nlohmann::json(fresh.scalar_names()));
  EXPECT_EQ(m["measures"]["groups"][1]["denominator"], "vap");
  EXPECT_EQ(m["measures"]["groups"][0]["denominator"], "total population");
  EXPECT_EQ(m["measures"]["competitive"], nlohmann::json::parse("[0.4, 0.6]"));
  EXPECT_EQ(m["measures"]["reads_group_or_vote_columns"], true);
  EXPECT_EQ(m["measures"]["rules_read_group_columns"], false);
}

TEST(RunMeasures, BadMeasuresAndJudgeKeysAreRefusedWithFileLineAndKey) {
  const auto dir = test::scratch_dir("planmill-run-measures", "bad");
  const auto check = [&](const std::string& tail, const std::string& expected) {
    const fs::path job = measures_job(dir, "chains = 2\nsteps = 50\nseed = 1", tail);
    const std::string log = (dir / "check.log").string();
    EXPECT_EQ(test::shell(std::string(PLANMILL_BINARY) + " check " + job.string() + " >" + log + " 2>&1"), 2) << tail;
    const std::string text = test::read_text(log);
    EXPECT_NE(text.find(expected), std::string::npos) << text;
    fs::remove_all(dir / "state");
  };
  // The job file's line numbers: synth's job, then [sampler] (3 lines), [output] (2), then the tail.
  check("[measures]\nelection = [\"gov\"]\n", "measures.election");
  check("[measures]\nelections = [\"mayor\"]\n", "'mayor' is not an election");
  check("[measures]\ncompetitive = [0.6, 0.4]\n", "measures.competitive");
  check("[[measures.groups]]\ngroup = \"grp\"\ndenominator = \"adults\"\n", "'adults' is not listed in map.groups");
  check("[[measures.groups]]\ngroup = \"grp\"\nthreshold = 0.5\n", "measures.groups.threshold");
  check("[verdict]\njudge = []\n", "verdict.judge");

  // An unknown observable in verdict.judge stops the run before it writes anything.
  const fs::path job = measures_job(dir, "chains = 2\nsteps = 50\nseed = 1", "[verdict]\n\njudge = [\"cut_edges\"]\n");
  EXPECT_EQ(test::shell(run_command(job, dir / "out")), 2);
  const std::string log = test::read_text(dir / "out.log");
  EXPECT_NE(log.find("job.toml:"), std::string::npos) << log;
  EXPECT_NE(log.find("verdict.judge"), std::string::npos) << log;
  EXPECT_NE(log.find("'cut_edges' is not an observable of this run"), std::string::npos) << log;
  EXPECT_NE(log.find("compactness.cut_edges"), std::string::npos) << "the remedy lists the names: " << log;
  EXPECT_FALSE(fs::exists(dir / "out" / "run-state.json"));
}

}  // namespace
}  // namespace planmill
