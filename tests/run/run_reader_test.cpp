#include "planmill/run/run_reader.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <filesystem>
#include <fstream>

#include "../support/run_fixture.hpp"
#include "planmill/base/error.hpp"
#include "planmill/store/hdf5_handle.hpp"

namespace planmill {
namespace {

std::filesystem::path fresh_dir(const std::string& name) {
  const auto dir = std::filesystem::temp_directory_path() / ("planmill-run-reader-" + name);
  std::filesystem::remove_all(dir);
  return dir;
}

TEST(RunReader, ReadsEveryChainAcrossItsPlanFilesInOrder) {
  const auto dir = fresh_dir("order");
  const auto run = test::write_fixture_run(dir, {.chains = 3, .ranks = 2, .segments = 3});
  RunReader reader(dir.string());
  ASSERT_EQ(reader.chains().size(), 3U);
  for (const auto c : reader.chains()) {
    ASSERT_EQ(reader.record_count(c), run.plans.at(c).size());
    EXPECT_EQ(reader.record_steps(c), run.steps.at(c));
    const auto rows = reader.read_observables(c);
    ASSERT_EQ(rows.size(), run.observables.at(c).size() * 4);
    for (std::size_t r = 0; r < run.plans.at(c).size(); ++r) {
      EXPECT_EQ(reader.read_plan(c, r), run.plans.at(c)[r]) << "chain " << c << " record " << r;
      for (std::size_t j = 0; j < 4; ++j) EXPECT_EQ(rows[r * 4 + j], run.observables.at(c)[r][j]);
    }
  }
  EXPECT_TRUE(reader.verify().empty());
}

TEST(RunReader, ForEachPlanVisitsAStretchAcrossFilesAsTheFixtureWroteIt) {
  const auto dir = fresh_dir("for-each");
  const auto run = test::write_fixture_run(dir, {.chains = 2, .ranks = 2, .segments = 3});
  RunReader reader(dir.string());
  const auto& plans = run.plans.at(1);  // 60 records in 3 files of 20
  for (const auto [first, last] : {std::pair<std::uint64_t, std::uint64_t>{0, 59}, {13, 47}, {20, 20}}) {
    std::uint64_t expected = first;
    reader.for_each_plan(1, first, last, [&](std::uint64_t record, std::span<const DistrictIndex> plan) {
      ASSERT_EQ(record, expected++);
      EXPECT_TRUE(std::equal(plan.begin(), plan.end(), plans.at(record).begin(), plans.at(record).end()))
          << "record " << record;
    });
    EXPECT_EQ(expected, last + 1) << "every record of the stretch, once";
  }
  EXPECT_THROW(reader.for_each_plan(1, 10, 60, [](auto, auto) {}), std::out_of_range);
  EXPECT_THROW(reader.for_each_plan(1, 5, 4, [](auto, auto) {}), std::out_of_range);
}

TEST(RunReader, IgnoresPlanFilesTheStateDoesNotList) {
  const auto dir = fresh_dir("unlisted");
  auto run = test::write_fixture_run(dir, {.chains = 2, .ranks = 1, .segments = 2});
  // Forget the second interval, as if the run had been killed before its second checkpoint.
  RunState cut = run.state;
  cut.files.resize(1);
  for (auto& c : cut.chains) {
    c.spans.resize(1);
    c.records = c.spans[0].records;
  }
  write_run_state(RunLayout{dir}, cut);
  RunReader reader(dir.string());
  EXPECT_EQ(reader.record_count(0), run.plans.at(0).size() / 2);
  EXPECT_THROW((void)reader.read_plan(0, run.plans.at(0).size() / 2), std::out_of_range);
}

TEST(RunReader, AnUnopenableFileIsReportedWithItsChainAndRecordsAndOthersStayReadable) {
  const auto dir = fresh_dir("truncated");
  const auto run = test::write_fixture_run(dir, {.chains = 2, .ranks = 2, .segments = 2});
  const auto victim = RunLayout{dir}.resolve(RunLayout::plan_file_name(1, 1));  // chain 1, 2nd half
  std::filesystem::resize_file(victim, 100);
  RunReader reader(dir.string());
  const auto problems = reader.verify();
  ASSERT_EQ(problems.size(), 1U);
  EXPECT_EQ(problems[0].chain_index, 1U);
  EXPECT_EQ(problems[0].first_record, 20U);
  EXPECT_EQ(problems[0].last_record, 39U);
  EXPECT_EQ(reader.read_plan(1, 3), run.plans.at(1)[3]);   // the first file still reads
  EXPECT_THROW((void)reader.read_plan(1, 25), StoreError);
  EXPECT_EQ(reader.read_plan(0, 30), run.plans.at(0)[30]);  // the other chain is untouched
}

TEST(RunReader, AFolderWithoutRunStateIsAnInputError) {
  const auto dir = fresh_dir("empty");
  std::filesystem::create_directories(dir);
  EXPECT_THROW(RunReader(dir.string()), InputError);
  std::ofstream(RunLayout{dir}.state_file()) << "{ not json";
  EXPECT_THROW(RunReader(dir.string()), InputError);
}

}  // namespace
}  // namespace planmill
