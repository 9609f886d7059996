// Reference check against numpy (Debian python3-numpy via /usr/bin/python3): for a few hundred
// plans of a recombination chain on a synth state, a Python script recomputes every measure from
// the unit table, the adjacency and each plan's labels alone (tallies by np.bincount, perimeters
// from outer boundaries and cut shared lengths, splits from county-district pairs, then the
// formulas of docs/measures.md as the papers write them) and compares with the evaluator.
#include <gtest/gtest.h>
#include <unistd.h>

#include <cstdio>
#include <fstream>
#include <iostream>
#include <string>

#include "planmill/chain/chain.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/measures/measures.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/synth/synth.hpp"
#include "measures_python.hpp"
#include "run_jobs.hpp"
#include "command_output.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

// argv: units.csv adjacency.csv plans.txt measures.csv. Prints "checked PLANS MEASURES", then
// "distinct N", the number of different plans among them.
// Counts and the sorted shares (exact integer tallies, one division) must agree to the last bit;
// sums over districts in another order within 1e-12, Polsby-Popper (tallies of decimal areas and
// lengths kept by +/- over many moves) within 1e-9, relative.
const char* const kReadCsv = R"PY(
with open(sys.argv[4], newline="") as fh:
    reader = csv.reader(fh)
    header = next(reader)
    got = [[float(x) for x in row[1:]] for row in reader]  # row[0]: the plan number
k = int(header[0].split("=")[1])
names = header[1:]

)PY";

const std::string kPythonCheck = std::string(test::kMeasuresPythonLoad) + kReadCsv + test::kMeasuresPythonCheck;

struct Written {
  fs::path dir;
  std::size_t plans = 0;
  std::size_t columns = 0;
};

// A synth state, a recombination chain on it and the evaluator's outputs for `plans` plans: every
// scalar, then every sorted vector as <name>[i]. Even records use the chain's split tallies, odd
// ones a recount.
Written write_plans_and_measures(std::size_t plans) {
  Written w{test::scratch_dir("planmill-measures-reference", "state-" + std::to_string(::getpid()))};
  (void)write_synthetic_state({600, 6, 3, w.dir.string()});
  JobSpec job = load_job((w.dir / "job.toml").string());
  const GraphHandle graph = share_graph(load_unit_graph(job.map));
  ChainSetup setup;
  setup.graph = graph;
  setup.rules.population_tolerance = 0.05;
  setup.kernel.kind = KernelKind::recombination;
  setup.run_seed = 21;
  Rng rng = make_stream(21, 1);
  Chain chain(setup, random_seed_plan(graph, 6, setup.rules, rng));
  MeasureEvaluator measures(graph, 6, default_measure_spec(*graph));

  std::ofstream plan_file(w.dir / "plans.txt"), measure_file(w.dir / "measures.csv");
  for (UnitIndex u = 0; u < graph->unit_count(); ++u) plan_file << (u ? " " : "") << graph->unit_id(u);
  plan_file << "\n";
  measure_file << "k=6";
  for (const std::string& name : measures.scalar_names()) measure_file << "," << name;
  for (const std::string& name : measures.vector_names())
    for (std::size_t i = 0; i < 6; ++i) measure_file << "," << name << "[" << i << "]";
  measure_file << "\n";
  char buf[40];
  for (std::size_t p = 0; p < plans; ++p) {
    for (int s = 0; s < 3; ++s) (void)chain.step();
    const ChainState& state = chain.state();
    if (p % 2 == 0)
      measures.evaluate(state.plan, {&state.rules.county_tally(), &state.rules.municipality_tally()});
    else
      measures.evaluate(state.plan);
    for (UnitIndex u = 0; u < graph->unit_count(); ++u) plan_file << (u ? " " : "") << state.plan.district_of(u);
    plan_file << "\n";
    measure_file << p;
    for (const double x : measures.scalars()) std::snprintf(buf, sizeof buf, ",%.17g", x), measure_file << buf;
    for (std::size_t v = 0; v < measures.vector_names().size(); ++v)
      for (const double x : measures.sorted_vector(v)) std::snprintf(buf, sizeof buf, ",%.17g", x), measure_file << buf;
    measure_file << "\n";
  }
  w.plans = plans;
  w.columns = measures.scalar_names().size() + 6 * measures.vector_names().size();
  return w;
}

// The first column of measures.csv is the plan number; the script reads the rest by name.
std::string python_check(const Written& w) {
  const fs::path script = w.dir / "check.py";
  std::ofstream(script) << kPythonCheck;
  const std::string command = "/usr/bin/python3 " + script.string() + " " + (w.dir / "units.csv").string() + " " +
                              (w.dir / "adjacency.csv").string() + " " + (w.dir / "plans.txt").string() + " " +
                              (w.dir / "measures.csv").string() + " 2>&1";
  return test::command_output(command);
}

TEST(MeasuresNumpy, EveryMeasureOfEveryPlanMatchesAnIndependentRecomputation) {
  const Written w = write_plans_and_measures(300);
  // 24 scalars (2 elections x 7, 1 group threshold, 3 compactness, 2 population balance, 4 splits)
  // and 3 x 6 shares.
  EXPECT_EQ(w.columns, 24U + 18U);
  const std::string result = python_check(w);
  ASSERT_EQ(result.substr(0, result.find('\n') + 1), "checked 300 " + std::to_string(w.columns) + "\n") << result;
  const std::size_t distinct = std::stoul(result.substr(result.find("distinct ") + 9));
  EXPECT_GT(distinct, 200U) << "the chain should give mostly different plans";
  std::cout << result;
}

// The check must catch a wrong value: one measure of one plan nudged by one part in 10^9.
TEST(MeasuresNumpy, TheCheckCatchesAChangedMeasure) {
  const Written w = write_plans_and_measures(20);
  const fs::path csv = w.dir / "measures.csv";
  std::string text = test::read_text(csv);
  // Plan 7's efficiency gap of gov is its fourth field: replace the value with itself + 1e-9.
  const std::size_t row = text.find("\n7,") + 1;
  std::size_t start = row;
  for (int field = 0; field < 3; ++field) start = text.find(',', start) + 1;
  const std::size_t end = text.find(',', start);
  const double value = std::stod(text.substr(start, end - start));
  char buf[40];
  std::snprintf(buf, sizeof buf, "%.17g", value + 1e-9);
  text.replace(start, end - start, buf);
  std::ofstream(csv, std::ios::trunc) << text;
  const std::string result = python_check(w);
  EXPECT_NE(result.find("mismatch: election.gov.efficiency_gap of plan 7"), std::string::npos) << result;
}

}  // namespace
}  // namespace planmill
