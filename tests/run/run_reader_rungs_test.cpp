// RunReader on a run that recorded every rung of its ladders ([tempering] record = "all"): each
// hot rung reads back as the fixture wrote it, a rung not recorded is out of range, and damage to
// a hot rung's records shows in verify_rungs() and never in verify() (the ensemble).
#include <gtest/gtest.h>

#include <filesystem>

#include "../support/run_fixture.hpp"
#include "planmill/run/run_reader.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

fs::path fresh_dir(const std::string& name) {
  const auto dir = fs::temp_directory_path() / ("planmill-run-reader-rungs-" + name);
  fs::remove_all(dir);
  return dir;
}

// Chains 0 and 2 on rank 0, chain 1 on rank 1; 2 segments of 20 records; rungs 0..2 recorded.
constexpr test::FixtureRunOptions kLadders = {.chains = 3, .ranks = 2, .recorded_rungs = 3};

bool starts_with(const std::string& text, const std::string& prefix) {
  return text.rfind(prefix, 0) == 0;
}

TEST(RunReaderRungs, EveryRungOfEveryChainReadsBackAsWritten) {
  const auto dir = fresh_dir("all");
  const auto run =
      test::write_fixture_run(dir, {.chains = 3, .ranks = 2, .segments = 3, .recorded_rungs = 4});
  const RunReader reader(dir.string());
  for (const auto c : reader.chains()) {
    ASSERT_EQ(reader.recorded_rungs(c), 4U);
    // Rung 0 is the chain itself, as without tempering.
    EXPECT_EQ(reader.record_steps(c, 0), run.steps.at(c));
    EXPECT_EQ(reader.read_plan(c, 7, 0), run.plans.at(c)[7]);
    for (std::uint64_t rung = 1; rung < 4; ++rung) {
      const auto& written = run.rungs.at({c, rung});
      ASSERT_EQ(written.plans.size(), reader.record_count(c));
      EXPECT_EQ(reader.record_steps(c, rung), run.steps.at(c));  // the target rung's steps
      EXPECT_EQ(reader.record_steps(c, rung), written.steps);
      const auto rows = reader.read_observables(c, rung);
      ASSERT_EQ(rows.size(), written.observables.size() * 4);
      std::size_t same_as_target = 0;
      for (std::size_t r = 0; r < written.plans.size(); ++r) {
        EXPECT_EQ(reader.read_plan(c, r, rung), written.plans[r])
            << "chain " << c << " rung " << rung << " record " << r;
        same_as_target += written.plans[r] == run.plans.at(c)[r];
        for (std::size_t j = 0; j < 4; ++j) EXPECT_EQ(rows[r * 4 + j], written.observables[r][j]);
      }
      // The rungs' plans are drawn apart from the chain's, so reading rung 0 instead would fail.
      EXPECT_EQ(same_as_target, 0U);
    }
  }
  EXPECT_TRUE(reader.verify().empty());
  EXPECT_TRUE(reader.verify_rungs().empty());
}

TEST(RunReaderRungs, WithoutRecordAllOnlyRungZeroExists) {
  const auto dir = fresh_dir("one");
  const auto run = test::write_fixture_run(dir, {.chains = 2, .ranks = 1});
  const RunReader reader(dir.string());
  EXPECT_EQ(reader.recorded_rungs(0), 1U);
  EXPECT_EQ(reader.read_plan(1, 3, 0), run.plans.at(1)[3]);
  EXPECT_THROW((void)reader.read_plan(1, 3, 1), std::out_of_range);
  EXPECT_THROW((void)reader.record_steps(0, 1), std::out_of_range);
  EXPECT_THROW((void)reader.read_observables(0, 1), std::out_of_range);
  EXPECT_THROW((void)reader.recorded_rungs(2), std::out_of_range);
  EXPECT_TRUE(reader.verify_rungs().empty());
  EXPECT_TRUE(run.rungs.empty());
}

TEST(RunReaderRungs, ARungBeyondTheRecordedOnesIsOutOfRange) {
  const auto dir = fresh_dir("beyond");
  (void)test::write_fixture_run(dir, kLadders);
  const RunReader reader(dir.string());
  EXPECT_NO_THROW((void)reader.read_plan(2, 0, 2));
  EXPECT_THROW((void)reader.read_plan(2, 0, 3), std::out_of_range);
  EXPECT_THROW((void)reader.record_steps(2, 3), std::out_of_range);
  EXPECT_THROW((void)reader.read_observables(2, 64), std::out_of_range);
  EXPECT_THROW((void)reader.read_plan(2, 40, 1), std::out_of_range);  // 40 records: 0..39
}

TEST(RunReaderRungs, DamageToAHotRungShowsInVerifyRungsOnly) {
  const auto dir = fresh_dir("damaged");
  const auto run = test::write_fixture_run(dir, kLadders);
  const std::string file = RunLayout::plan_file_name(1, 1);  // chain 1, records 20..39
  ASSERT_TRUE(test::damage_chunk(dir / file, rung_record_index(1, 2), "observables"));
  const RunReader reader(dir.string());
  EXPECT_TRUE(reader.verify().empty());  // the ensemble is intact
  const auto problems = reader.verify_rungs();
  ASSERT_EQ(problems.size(), 1U);
  EXPECT_EQ(problems[0].chain_index, 1U);
  EXPECT_EQ(problems[0].first_record, 20U);  // the single observables chunk of that span
  EXPECT_EQ(problems[0].last_record, 39U);
  EXPECT_TRUE(starts_with(problems[0].what, file + ": rung 2: ")) << problems[0].what;
  EXPECT_THROW((void)reader.read_observables(1, 2), StoreError);
  EXPECT_EQ(reader.read_observables(1, 1).size(), 40U * 4);               // another rung, same file
  EXPECT_EQ(reader.read_plan(1, 30, 2), run.rungs.at({1, 2}).plans[30]);  // plans are apart
}

TEST(RunReaderRungs, DamagedHotRungPlanBytesAreReportedWithinTheirSpan) {
  const auto dir = fresh_dir("plan-bytes");
  (void)test::write_fixture_run(dir, kLadders);
  const std::string file = RunLayout::plan_file_name(0, 0);  // chains 0 and 2, records 0..19
  ASSERT_TRUE(test::damage_chunk(dir / file, rung_record_index(2, 1), "plan_bytes"));
  const RunReader reader(dir.string());
  EXPECT_TRUE(reader.verify().empty());
  const auto problems = reader.verify_rungs();
  ASSERT_FALSE(problems.empty());
  for (const auto& p : problems) {
    EXPECT_EQ(p.chain_index, 2U);
    EXPECT_LE(p.first_record, p.last_record);
    EXPECT_LE(p.last_record, 19U);
    EXPECT_TRUE(starts_with(p.what, file + ": rung 1: ")) << p.what;
  }
}

TEST(RunReaderRungs, AnUnopenableFileIsReportedForTheChainAndEachOfItsRungs) {
  const auto dir = fresh_dir("truncated");
  const auto run = test::write_fixture_run(dir, kLadders);
  const std::string file = RunLayout::plan_file_name(1, 1);
  fs::resize_file(dir / file, 100);
  const RunReader reader(dir.string());
  const auto chain_problems = reader.verify();
  ASSERT_EQ(chain_problems.size(), 1U);
  EXPECT_EQ(chain_problems[0].chain_index, 1U);
  const auto problems = reader.verify_rungs();
  ASSERT_EQ(problems.size(), 2U);
  for (std::size_t i = 0; i < 2; ++i) {
    EXPECT_EQ(problems[i].chain_index, 1U);
    EXPECT_EQ(problems[i].first_record, 20U);
    EXPECT_EQ(problems[i].last_record, 39U);
    EXPECT_TRUE(starts_with(problems[i].what,
                            file + ": rung " + std::to_string(i + 1) + ": cannot be opened"))
        << problems[i].what;
  }
  EXPECT_EQ(reader.read_plan(1, 5, 2), run.rungs.at({1, 2}).plans[5]);  // the first file reads
  EXPECT_THROW((void)reader.read_plan(1, 25, 2), StoreError);
  EXPECT_EQ(reader.read_plan(0, 25, 2), run.rungs.at({0, 2}).plans[25]);
}

// A state that lists more rungs than the files hold (records lost): reported, not thrown.
TEST(RunReaderRungs, RungsTheStateListsButTheFilesLackAreReported) {
  const auto dir = fresh_dir("missing");
  auto run = test::write_fixture_run(dir, {.chains = 2, .ranks = 1, .recorded_rungs = 2});
  run.state.chains[1].recorded_rungs = 3;
  write_run_state(RunLayout{dir}, run.state);
  const RunReader reader(dir.string());
  EXPECT_TRUE(reader.verify().empty());
  const auto problems = reader.verify_rungs();
  ASSERT_EQ(problems.size(), 2U);  // one per file of chain 1
  for (std::size_t i = 0; i < 2; ++i) {
    EXPECT_EQ(problems[i].chain_index, 1U);
    EXPECT_EQ(problems[i].first_record, 20 * i);
    EXPECT_EQ(problems[i].last_record, 20 * i + 19);
    EXPECT_TRUE(starts_with(problems[i].what, RunLayout::plan_file_name(i, 0) + ": rung 2: "))
        << problems[i].what;
  }
  EXPECT_THROW((void)reader.read_plan(1, 0, 2), StoreError);
}

// Records the state does not list are ignored: hot-rung groups of a chain whose state says it
// recorded only rung 0 are never read, even when damaged.
TEST(RunReaderRungs, HotRungGroupsTheStateDoesNotListAreIgnored) {
  const auto dir = fresh_dir("unlisted");
  auto run = test::write_fixture_run(dir, {.chains = 2, .ranks = 1, .recorded_rungs = 2});
  for (auto& c : run.state.chains) c.recorded_rungs = 1;
  write_run_state(RunLayout{dir}, run.state);
  ASSERT_TRUE(test::damage_chunk(dir / RunLayout::plan_file_name(0, 0), rung_record_index(1, 1),
                                 "observables"));
  const RunReader reader(dir.string());
  EXPECT_TRUE(reader.verify().empty());
  EXPECT_TRUE(reader.verify_rungs().empty());
  EXPECT_THROW((void)reader.read_plan(1, 0, 1), std::out_of_range);
}

// A damaged record index (plan_records) of a chain is a problem to report, not an exception.
TEST(RunReaderRungs, ADamagedRecordIndexIsReportedNotThrown) {
  const auto dir = fresh_dir("index");
  (void)test::write_fixture_run(dir, kLadders);
  const std::string file = RunLayout::plan_file_name(0, 1);
  ASSERT_TRUE(test::damage_chunk(dir / file, 1, "plan_records"));
  ASSERT_TRUE(test::damage_chunk(dir / file, rung_record_index(1, 1), "plan_records"));
  const RunReader reader(dir.string());
  std::vector<ChainProblem> chain_problems, rung_problems;
  ASSERT_NO_THROW(chain_problems = reader.verify());
  ASSERT_NO_THROW(rung_problems = reader.verify_rungs());
  ASSERT_FALSE(chain_problems.empty());
  for (const auto& p : chain_problems) {
    EXPECT_EQ(p.chain_index, 1U);
    EXPECT_TRUE(starts_with(p.what, file + ": chain_1: ")) << p.what;
  }
  ASSERT_FALSE(rung_problems.empty());
  for (const auto& p : rung_problems) {
    EXPECT_EQ(p.chain_index, 1U);
    EXPECT_TRUE(starts_with(p.what, file + ": rung 1: ")) << p.what;
  }
}

}  // namespace
}  // namespace planmill
