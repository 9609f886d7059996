// planmill export --rung R: the files hold rung R of every chain's ladder as the run recorded it,
// under names that carry the rung (rung 0 keeps today's names); a rung a chain did not record is
// refused before anything is written; only damage to rung R leaves a chain out.
#include <gtest/gtest.h>

#include <cstdlib>

#include "export_support.hpp"
#include "planmill/base/error.hpp"
#include "planmill/export/export.hpp"
#include "planmill/io/csv.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using test::ExportFixture;

// 3 chains (0 and 2 on rank 0), 2 segments of 20 records, rungs 0..2 recorded.
constexpr test::FixtureRunOptions kLadders = {.chains = 3, .ranks = 2, .recorded_rungs = 3};

ExportOptions options_for(const ExportFixture& f, std::uint64_t rung) {
  ExportOptions o;
  o.run_dir = f.run_dir.string();
  o.out_dir = f.out_dir.string();
  o.rung = rung;
  return o;
}

std::vector<std::string> files_in(const fs::path& dir) {
  std::vector<std::string> out;
  for (const auto& e : fs::recursive_directory_iterator(dir)) {
    if (e.is_regular_file()) out.push_back(fs::relative(e.path(), dir).string());
  }
  std::sort(out.begin(), out.end());
  return out;
}

TEST(ExportRungs, FileNamesCarryTheRungOnlyAboveZero) {
  EXPECT_EQ(observables_file_name(0), "observables.csv");
  EXPECT_EQ(observables_file_name(3), "observables-rung-3.csv");
  EXPECT_EQ(plan_file_name({2, 17}, 0), "plans/chain-2-record-17.csv");
  EXPECT_EQ(plan_file_name({2, 17}, 3), "plans/chain-2-rung-3-record-17.csv");
  EXPECT_EQ(wide_file_name(0), "plans-wide.csv");
  EXPECT_EQ(wide_file_name(1), "plans-wide-rung-1.csv");
}

TEST(ExportRungs, AHotRungsObservablesAndPlansAreThoseItRecorded) {
  ExportFixture f(kLadders);
  ExportOptions o = options_for(f, 2);
  o.plans.every = 10;
  o.layout = {.files = true, .wide = true};
  const ExportResult result = export_run(o);
  EXPECT_TRUE(result.left_out.empty());
  EXPECT_EQ(result.plans, 12U);

  const CsvTable table = read_csv_file((f.out_dir / observables_file_name(2)).string());
  ASSERT_EQ(table.rows.size(), 120U);
  std::size_t row = 0;
  for (std::uint64_t chain = 0; chain < 3; ++chain) {
    const auto& written = f.run.rungs.at({chain, 2});
    for (std::size_t r = 0; r < written.steps.size(); ++r, ++row) {
      const auto& fields = table.rows[row].fields;
      EXPECT_EQ(fields[0], std::to_string(chain));
      EXPECT_EQ(fields[1], std::to_string(r));
      EXPECT_EQ(fields[2], std::to_string(written.steps[r]));
      for (std::size_t j = 0; j < 4; ++j) {
        EXPECT_EQ(std::strtod(fields[3 + j].c_str(), nullptr), written.observables[r][j]);
      }
    }
  }
  for (std::uint64_t chain = 0; chain < 3; ++chain) {
    for (std::uint64_t r = 0; r < 40; r += 10) {
      const CsvTable plan = read_csv_file((f.out_dir / plan_file_name({chain, r}, 2)).string());
      const auto& expected = f.run.rungs.at({chain, 2}).plans[r];
      ASSERT_EQ(plan.rows.size(), expected.size());
      for (std::size_t u = 0; u < expected.size(); ++u) {
        EXPECT_EQ(plan.rows[u].fields[0], f.ids[u]);
        EXPECT_EQ(plan.rows[u].fields[1], std::to_string(expected[u] + 1));
      }
    }
  }
  const CsvTable wide = read_csv_file((f.out_dir / wide_file_name(2)).string());
  ASSERT_EQ(wide.header.size(), 13U);
  EXPECT_EQ(wide.header[1], "c0_r0");
  for (std::size_t u = 0; u < f.ids.size(); ++u) {
    EXPECT_EQ(wide.rows[u].fields[12], std::to_string(f.run.rungs.at({2, 2}).plans[30][u] + 1));
  }
  // Only rung-named files: nothing that a rung-0 export would write or replace.
  for (const auto& name : files_in(f.out_dir)) {
    EXPECT_NE(name.find("rung-2"), std::string::npos) << name;
  }
}

TEST(ExportRungs, RungZeroOfALadderRunIsTheEnsembleUnderTodaysNames) {
  ExportFixture f(kLadders);
  ExportOptions o = options_for(f, 0);
  o.plans.records = {{1, 25}};
  (void)export_run(o);
  EXPECT_EQ(files_in(f.out_dir),
            (std::vector<std::string>{"observables.csv", "plans/chain-1-record-25.csv"}));
  const CsvTable plan = read_csv_file((f.out_dir / plan_file_name({1, 25})).string());
  for (std::size_t u = 0; u < f.ids.size(); ++u) {
    EXPECT_EQ(plan.rows[u].fields[1], std::to_string(f.run.plans.at(1)[25][u] + 1));
  }
}

TEST(ExportRungs, ARungAChainDidNotRecordIsOneLineExitTwoAndNothingIsWritten) {
  ExportFixture plain;  // recorded_rungs = 1
  std::string message;
  try {
    (void)export_run(options_for(plain, 1));
  } catch (const InputError& e) {
    message = e.what();
  }
  EXPECT_NE(message.find("chain 0 recorded 1 rung (rung 0 only)"), std::string::npos) << message;
  EXPECT_NE(message.find("[tempering] record = \"all\""), std::string::npos) << message;
  EXPECT_FALSE(fs::exists(plain.out_dir));

  ExportFixture f(kLadders);
  // Chain 2 recorded only its target rung; chains 0 and 1 all three.
  f.run.state.chains[2].recorded_rungs = 1;
  write_run_state(RunLayout{f.run_dir}, f.run.state);
  std::string errors;
  EXPECT_EQ(
      test::run_export(f.run_dir.string() + " --out " + f.out_dir.string() + " --rung 2", &errors),
      2);
  EXPECT_NE(errors.find("chain 2 recorded 1 rung"), std::string::npos) << errors;
  EXPECT_NE(errors.find("record = \"all\""), std::string::npos) << errors;
  EXPECT_EQ(std::count(errors.begin(), errors.end(), '\n'), 1) << errors;
  EXPECT_EQ(
      test::run_export(f.run_dir.string() + " --out " + f.out_dir.string() + " --rung 3", &errors),
      2);
  EXPECT_NE(errors.find("chain 0 recorded 3 rungs (0..2), so it has no rung 3"), std::string::npos)
      << errors;
  EXPECT_FALSE(fs::exists(f.out_dir));
}

TEST(ExportRungs, OnlyDamageToTheExportedRungLeavesAChainOut) {
  ExportFixture f(kLadders);
  ASSERT_TRUE(test::damage_chunk(f.run_dir / RunLayout::plan_file_name(1, 1),
                                 rung_record_index(1, 2), "observables"));
  const std::string args = f.run_dir.string() + " --out " + f.out_dir.string() + " --every 10";
  std::string errors;
  EXPECT_EQ(test::run_export(args + " --rung 2", &errors), 3);
  EXPECT_NE(errors.find("chain 1, records 20-39"), std::string::npos) << errors;
  EXPECT_NE(errors.find("rung 2: "), std::string::npos) << errors;
  const CsvTable table = read_csv_file((f.out_dir / observables_file_name(2)).string());
  EXPECT_EQ(table.rows.size(), 80U);
  for (const auto& row : table.rows) EXPECT_NE(row.fields[0], "1");
  EXPECT_FALSE(fs::exists(f.out_dir / plan_file_name({1, 0}, 2)));
  EXPECT_TRUE(fs::exists(f.out_dir / plan_file_name({2, 30}, 2)));
  // Rung 1 of the same chain, and the ensemble, are intact.
  EXPECT_EQ(test::run_export(args + " --rung 1", &errors), 0) << errors;
  EXPECT_EQ(test::run_export(args, &errors), 0) << errors;
  EXPECT_EQ(read_csv_file((f.out_dir / observables_file_name(1)).string()).rows.size(), 120U);
}

}  // namespace
}  // namespace planmill
