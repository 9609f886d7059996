// planmill export: the files it writes hold exactly what the run recorded, bad choices write
// nothing, and a damaged plan file leaves out only its chain.
#include "planmill/export/export.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <cstdlib>
#include <limits>
#include <random>

#include "export_support.hpp"
#include "planmill/base/error.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/io/csv.hpp"
#include "planmill/io/file_hash.hpp"
#include "planmill/seed/plan_csv.hpp"
#include "planmill/job/job.hpp"
#include "planmill/plan/plan.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using test::ExportFixture;

ExportOptions options_for(const ExportFixture& f) {
  ExportOptions o;
  o.run_dir = f.run_dir.string();
  o.out_dir = f.out_dir.string();
  return o;
}

// Checks one exported plan file against what the fixture recorded.
void expect_plan_file(const ExportFixture& f, const RecordRef& ref) {
  const CsvTable table = read_csv_file((f.out_dir / plan_file_name(ref)).string());
  const auto& plan = f.run.plans.at(ref.chain).at(ref.record);
  ASSERT_EQ(table.rows.size(), plan.size());
  for (std::size_t u = 0; u < plan.size(); ++u) {
    ASSERT_EQ(table.rows[u].fields.size(), 2u);
    EXPECT_EQ(table.rows[u].fields[0], f.ids[u]);
    EXPECT_EQ(table.rows[u].fields[1], std::to_string(plan[u] + 1)) << "unit " << u;
  }
}

TEST(ExportLists, RecordAndChainListsParse) {
  EXPECT_EQ(parse_record_list("3:120, 0:5", "--plans"), (std::vector<RecordRef>{{3, 120}, {0, 5}}));
  EXPECT_EQ(parse_chain_list("0,2,5-7", "--chains"), (std::vector<std::uint64_t>{0, 2, 5, 6, 7}));
  for (const char* bad : {"3", "3:", ":4", "a:1", "1:2:3", "1:-2", ""}) {
    EXPECT_THROW((void)parse_record_list(bad, "--plans"), InputError) << bad;
  }
  for (const char* bad : {"x", "3-1", "1-", "-1", "1,,2"}) {
    EXPECT_THROW((void)parse_chain_list(bad, "--chains"), InputError) << bad;
  }
}

TEST(ExportNumbers, ShortestTextReadsBackExactly) {
  std::mt19937_64 rng(7);
  std::uniform_real_distribution<double> exponent(-300, 300);
  for (int i = 0; i < 2000; ++i) {
    const double x = std::pow(10.0, exponent(rng)) * (i % 2 ? -1 : 1);
    EXPECT_EQ(std::strtod(csv_number(x).c_str(), nullptr), x) << csv_number(x);
  }
  EXPECT_EQ(csv_number(std::numeric_limits<double>::quiet_NaN()), "NA");
  EXPECT_EQ(csv_number(-std::numeric_limits<double>::infinity()), "-Inf");
  EXPECT_EQ(csv_number(3.0), "3");
}

TEST(Export, ObservableTableHoldsEveryRecordOfEveryChainAndNoPlansByDefault) {
  ExportFixture f;
  fs::remove(f.units_csv);  // observables alone need no map
  const ExportResult result = export_run(options_for(f));
  EXPECT_TRUE(result.left_out.empty());
  EXPECT_EQ(result.plans, 0u);
  EXPECT_FALSE(fs::exists(f.out_dir / "plans"));
  const CsvTable table = read_csv_file((f.out_dir / observables_file_name()).string());
  std::vector<std::string> header = {"chain", "record", "step"};
  for (const auto& name : f.run.state.observable_names) header.push_back(name);
  EXPECT_EQ(table.header, header);
  std::size_t row = 0;
  for (const auto& [chain, rows] : f.run.observables) {
    for (std::size_t r = 0; r < rows.size(); ++r, ++row) {
      ASSERT_LT(row, table.rows.size());
      const auto& fields = table.rows[row].fields;
      EXPECT_EQ(fields[0], std::to_string(chain));
      EXPECT_EQ(fields[1], std::to_string(r));
      EXPECT_EQ(fields[2], std::to_string(f.run.steps.at(chain)[r]));
      for (std::size_t j = 0; j < rows[r].size(); ++j) {
        EXPECT_EQ(std::strtod(fields[3 + j].c_str(), nullptr), rows[r][j]) << row << " " << j;
      }
    }
  }
  EXPECT_EQ(row, table.rows.size());
  EXPECT_EQ(result.observable_rows, row);
}

TEST(Export, NamedPlansCarryTheMapsUnitIds) {
  ExportFixture f;
  ExportOptions o = options_for(f);
  o.plans.records = {{2, 39}, {0, 0}, {1, 20}, {0, 0}};
  const ExportResult result = export_run(o);
  EXPECT_EQ(result.plans, 3u);
  for (const RecordRef ref : {RecordRef{0, 0}, RecordRef{1, 20}, RecordRef{2, 39}}) {
    expect_plan_file(f, ref);
  }
  EXPECT_EQ(std::distance(fs::directory_iterator(f.out_dir / "plans"), fs::directory_iterator()),
            3);
}

TEST(Export, EveryNthRecordOfTheChosenChains) {
  ExportFixture f;
  const RunReader run(f.run_dir.string());
  PlanChoice choice;
  choice.every = 7;
  choice.chains_given = true;
  choice.chains = {2, 0};
  const auto chosen = choose_records(run, choice);
  std::vector<RecordRef> expected;
  for (std::uint64_t c : {0u, 2u}) {
    for (std::uint64_t r = 0; r < 40; r += 7) expected.push_back({c, r});
  }
  EXPECT_EQ(chosen, expected);
  choice.every = 0;  // --chains alone: every record
  EXPECT_EQ(choose_records(run, choice).size(), 80u);
  choice.chains_given = false;
  choice.every = 10;
  choice.records = {{1, 3}};
  EXPECT_EQ(choose_records(run, choice).size(), 13u);  // 4 per chain and 1:3

  ExportOptions o = options_for(f);
  o.plans = choice;
  (void)export_run(o);
  for (const RecordRef& ref : choose_records(run, choice)) expect_plan_file(f, ref);
}

TEST(Export, WideTableHasOneColumnPerPlan) {
  ExportFixture f;
  ExportOptions o = options_for(f);
  o.plans.records = {{1, 5}, {0, 39}};
  o.layout = {.files = false, .wide = true};
  (void)export_run(o);
  EXPECT_FALSE(fs::exists(f.out_dir / "plans"));
  const CsvTable table = read_csv_file((f.out_dir / wide_file_name()).string());
  EXPECT_EQ(table.header, (std::vector<std::string>{"unit", "c0_r39", "c1_r5"}));
  ASSERT_EQ(table.rows.size(), f.ids.size());
  for (std::size_t u = 0; u < f.ids.size(); ++u) {
    EXPECT_EQ(table.rows[u].fields[0], f.ids[u]);
    EXPECT_EQ(table.rows[u].fields[1], std::to_string(f.run.plans.at(0)[39][u] + 1));
    EXPECT_EQ(table.rows[u].fields[2], std::to_string(f.run.plans.at(1)[5][u] + 1));
  }
  o.layout = {.files = true, .wide = true};
  (void)export_run(o);
  expect_plan_file(f, {1, 5});
}

TEST(Export, AChainOrRecordTheRunLacksIsNamedAndNothingIsWritten) {
  ExportFixture f;
  ExportOptions o = options_for(f);
  o.plans.records = {{0, 1}, {5, 0}};
  std::string message;
  try {
    (void)export_run(o);
  } catch (const InputError& e) {
    message = e.what();
  }
  EXPECT_NE(message.find("no chain 5"), std::string::npos) << message;
  o.plans.records = {{1, 40}};
  EXPECT_THROW((void)export_run(o), InputError);
  o.plans.records = {};
  o.plans.chains_given = true;
  o.plans.chains = {0, 3};
  EXPECT_THROW((void)export_run(o), InputError);
  EXPECT_FALSE(fs::exists(f.out_dir));

  std::string errors;
  EXPECT_EQ(test::run_export(f.run_dir.string() + " --out " + f.out_dir.string() + " --plans 1:40",
                             &errors),
            2);
  EXPECT_NE(errors.find("chain 1 has no record 40"), std::string::npos) << errors;
  EXPECT_EQ(std::count(errors.begin(), errors.end(), '\n'), 1) << errors;
  EXPECT_FALSE(fs::exists(f.out_dir));
}

TEST(Export, AMissingMapIsNamedWithTheOptionThatGivesIt) {
  ExportFixture f;
  const fs::path moved = f.dir.path() / "elsewhere.csv";
  fs::rename(f.units_csv, moved);
  ExportOptions o = options_for(f);
  o.plans.records = {{0, 3}};
  const std::string message = test::expect_input_error(
      [&] { (void)export_run(o); }, (f.run_dir / "job.toml").string(), 0, "map.units");
  EXPECT_NE(message.find(f.units_csv.lexically_normal().string()), std::string::npos) << message;
  EXPECT_NE(message.find("--map-units"), std::string::npos) << message;
  EXPECT_FALSE(fs::exists(f.out_dir));

  o.units_path = moved.string();
  (void)export_run(o);
  expect_plan_file(f, {0, 3});
}

TEST(Export, AUnitTableOfAnotherSizeIsRefused) {
  ExportFixture f;
  f.dir.write("map/units.csv", "unit,pop\na,1\nb,2\n");
  ExportOptions o = options_for(f);
  o.plans.records = {{0, 3}};
  const std::string message =
      test::expect_input_error([&] { (void)export_run(o); }, f.units_csv.string(), 0, "");
  EXPECT_NE(message.find("has 2 units but the run's plans have 30"), std::string::npos) << message;
}

TEST(Export, AUnitTableChangedSinceTheRunStartedIsWarnedAbout) {
  ExportFixture f;
  ExportOptions o = options_for(f);
  o.plans.records = {{0, 3}};
  f.run.state.inputs = {{"units", f.units_csv.string(), sha256_file_hex(f.units_csv.string())}};
  write_run_state(RunLayout{f.run_dir}, f.run.state);
  EXPECT_TRUE(export_run(o).warnings.empty());
  f.run.state.inputs[0].sha256 = sha256_hex("another table");
  write_run_state(RunLayout{f.run_dir}, f.run.state);
  const auto warnings = export_run(o).warnings;
  ASSERT_EQ(warnings.size(), 1u);
  EXPECT_NE(warnings[0].find("differs from the one the run started with"), std::string::npos);
}

TEST(Export, AnExistingFolderIsReusedAndItsFilesReplaced) {
  ExportFixture f;
  fs::create_directories(f.out_dir);
  f.dir.write("out/notes.txt", "mine");
  f.dir.write("out/observables.csv", "stale");
  (void)export_run(options_for(f));
  EXPECT_EQ(test::read_file((f.out_dir / "notes.txt").string()), "mine");
  EXPECT_NE(test::read_file((f.out_dir / "observables.csv").string()), "stale");
  for (const auto& entry : fs::directory_iterator(f.out_dir)) {
    EXPECT_TRUE(entry.path().filename() == "notes.txt" ||
                entry.path().filename() == "observables.csv")
        << entry.path();  // no temp files
  }
}

TEST(Export, ADamagedPlanFileLeavesOutOnlyItsChainWithItsRecordRange) {
  ExportFixture f;  // chains 0 and 2 on rank 0, chain 1 on rank 1; 20 records per segment
  f.dir.write("run/" + RunLayout::plan_file_name(1, 1), std::string(4096, 'x'));
  ExportOptions o = options_for(f);
  o.plans.every = 10;
  const ExportResult result = export_run(o);
  ASSERT_EQ(result.left_out.size(), 1u);
  EXPECT_EQ(result.left_out[0].chain_index, 1u);
  EXPECT_EQ(result.left_out[0].first_record, 20u);
  EXPECT_EQ(result.left_out[0].last_record, 39u);
  EXPECT_EQ(result.plans, 8u);
  expect_plan_file(f, {2, 30});
  EXPECT_FALSE(fs::exists(f.out_dir / plan_file_name({1, 0})));
  const CsvTable table = read_csv_file((f.out_dir / observables_file_name()).string());
  EXPECT_EQ(table.rows.size(), 80u);
  for (const auto& row : table.rows) EXPECT_NE(row.fields[0], "1");

  std::string errors;
  EXPECT_EQ(test::run_export(f.run_dir.string() + " --out " + f.out_dir.string() + " --every 10",
                             &errors),
            3);
  EXPECT_NE(errors.find("chain 1, records 20-39"), std::string::npos) << errors;
}

// End to end on a real run: every exported plan is a valid plan of the map (read back by the plan
// CSV reader against the real graph), and the observables exported beside it are what the plan
// itself gives when recomputed from scratch.
TEST(Export, ARealRunExportsValidPlansWhoseObservablesRecomputeFromThePlans) {
  test::TempDir dir;
  const test::RealRun run = test::write_real_run(dir.path());
  const fs::path out = dir.path() / "csv";
  ASSERT_EQ(test::run_export(run.run_dir.string() + " --out " + out.string() + " --every 4"), 0);
  const JobSpec job = load_job(run.job.string());
  const GraphHandle graph_handle = share_graph(load_unit_graph(job.map));
  const UnitGraph& graph = *graph_handle;
  const CsvTable table = read_csv_file((out / observables_file_name()).string());
  const std::size_t cut = table.column_index("compactness.cut_edges");
  const std::size_t deviation = table.column_index("population_deviation");
  ASSERT_NE(cut, std::string::npos);
  ASSERT_NE(deviation, std::string::npos);
  EXPECT_EQ(table.rows.size(), 140u);  // 2 chains, records at steps 55, 60, ..., 400
  std::size_t plans = 0;
  for (const CsvRow& row : table.rows) {
    const RecordRef ref{std::stoull(row.fields[0]), std::stoull(row.fields[1])};
    if (ref.record % 4 != 0) continue;
    const Plan plan = read_plan_csv((out / plan_file_name(ref)).string(), graph_handle, job.districts);
    EXPECT_TRUE(plan.all_connected()) << plan_file_name(ref);
    // Cut edges and max |P_d - P/k| / (P/k) counted here from the edge list and unit populations.
    std::size_t cut_edges = 0;
    for (EdgeIndex e = 0; e < graph.edge_count(); ++e) {
      cut_edges += plan.district_of(graph.edge_first(e)) != plan.district_of(graph.edge_second(e));
    }
    std::vector<double> population(job.districts, 0.0);
    for (UnitIndex u = 0; u < graph.unit_count(); ++u) {
      population[plan.district_of(u)] += static_cast<double>(graph.population(u));
    }
    const double ideal = static_cast<double>(graph.total_population()) / job.districts;
    double worst = 0;
    for (double p : population) worst = std::max(worst, std::abs(p - ideal) / ideal);
    EXPECT_EQ(std::to_string(cut_edges), row.fields[cut]) << plan_file_name(ref);
    const double recorded = std::strtod(row.fields[deviation].c_str(), nullptr);
    EXPECT_NEAR(worst, recorded, 1e-12) << plan_file_name(ref);  // rounding only
    EXPECT_LE(recorded, job.rules.population_tolerance);
    ++plans;
  }
  EXPECT_EQ(plans, 36u);
}

// A job given by a relative path is recorded as an absolute one, so export finds the map from any
// folder; when the map has moved away, export stops with one line naming the key and the option.
TEST(Export, AJobGivenRelativelyIsFoundFromAnyFolderAndAMovedMapIsNamed) {
  test::TempDir dir;
  const std::string binary = PLANMILL_BINARY;
  ASSERT_EQ(test::shell_status(binary + " synth --units 200 --districts 4 --seed 2 --out " +
                               (dir.path() / "state").string() + " > /dev/null"),
            0);
  std::ofstream(dir.path() / "state" / "job.toml", std::ios::app)
      << "[sampler]\nchains = 1\nsteps = 60\nseed = 1\n";
  const std::string in_dir = "cd " + dir.path().string() + " && ";
  ASSERT_EQ(test::shell_status(in_dir + binary + " run state/job.toml --output run --quiet"), 0);
  EXPECT_EQ(RunReader((dir.path() / "run").string()).state().job_path,
            (dir.path() / "state" / "job.toml").lexically_normal().string());
  const std::string run_dir = (dir.path() / "run").string();
  EXPECT_EQ(test::run_export(run_dir + " --out " + (dir.path() / "csv").string() + " --plans 0:59"), 0);
  EXPECT_TRUE(fs::exists(dir.path() / "csv" / plan_file_name({0, 59})));
  fs::rename(dir.path() / "state", dir.path() / "moved");
  std::string errors;
  EXPECT_EQ(test::run_export(run_dir + " --out " + (dir.path() / "b").string() + " --plans 0:59",
                             &errors),
            2);
  EXPECT_NE(errors.find("'map.units'"), std::string::npos) << errors;
  EXPECT_NE(errors.find("--map-units"), std::string::npos) << errors;
  EXPECT_EQ(std::count(errors.begin(), errors.end(), '\n'), 1) << errors;
  EXPECT_EQ(test::run_export(run_dir + " --out " + (dir.path() / "b").string() +
                             " --plans 0:59 --map-units " +
                             (dir.path() / "moved" / "units.csv").string()),
            0);
  EXPECT_EQ(test::read_file((dir.path() / "b" / plan_file_name({0, 59})).string()),
            test::read_file((dir.path() / "csv" / plan_file_name({0, 59})).string()));
}

}  // namespace
}  // namespace planmill
