// Plan matrix cost on the benchmark state (`synth` 10,000 units, 100 districts, seed 7, ±5%):
// 10,000 plans of a recombination chain taken `interval` steps apart (after 2,000 steps from the
// seed plan), written as one plan matrix file (PlanMatrixWriter, docs/format.md "Plan matrix":
// uint8 cells, 1 MiB chunks of rows, shuffle + deflate 4). One iteration = adding every plan,
// close() and the file's flush and rename. Counters: file bytes per plan (the whole file over the
// plans, unit ids and row names included), and plans written per second.
//   build/benchmarks/bench_export
#include <benchmark/benchmark.h>
#include <unistd.h>

#include <filesystem>
#include <memory>

#include "planmill/chain/chain.hpp"
#include "planmill/export/plan_matrix.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/synth/synth.hpp"

namespace {

using namespace planmill;
namespace fs = std::filesystem;

constexpr std::size_t kPlans = 10000;
constexpr std::size_t kDistricts = 100;

GraphHandle benchmark_graph() {
  static const GraphHandle graph = [] {
    const auto dir =
        fs::temp_directory_path() / ("planmill_bench_export_" + std::to_string(getpid()));
    (void)write_synthetic_state({10000, kDistricts, 7, dir.string()});
    GraphHandle g = share_graph(load_unit_graph(load_job((dir / "job.toml").string()).map));
    fs::remove_all(dir);
    return g;
  }();
  return graph;
}

// kPlans plans of one chain, `interval` steps apart, row after row.
std::vector<DistrictIndex> chain_plans(std::uint64_t interval) {
  const GraphHandle graph = benchmark_graph();
  RuleSet rules;
  rules.population_tolerance = 0.05;
  Rng rng = make_stream(7, 99);
  ChainSetup setup;
  setup.graph = graph;
  setup.rules = rules;
  setup.kernel.kind = KernelKind::recombination;
  Chain chain(setup, random_seed_plan(graph, kDistricts, rules, rng));
  for (int i = 0; i < 2000; ++i) chain.step();
  std::vector<DistrictIndex> plans;
  plans.reserve(kPlans * graph->unit_count());
  for (std::size_t p = 0; p < kPlans; ++p) {
    for (std::uint64_t s = 0; s < interval; ++s) chain.step();
    const auto labels = chain.state().plan.assignment();
    plans.insert(plans.end(), labels.begin(), labels.end());
  }
  return plans;
}

void BM_PlanMatrixWrite(benchmark::State& bench) {
  const auto interval = static_cast<std::uint64_t>(bench.range(0));
  const GraphHandle graph = benchmark_graph();
  const std::size_t n = graph->unit_count();
  const std::vector<DistrictIndex> plans = chain_plans(interval);
  PlanMatrixHeader header;
  for (UnitIndex u = 0; u < n; ++u) header.unit_ids.push_back(graph->unit_id(u));
  header.district_count = kDistricts;
  header.run_id = "bench";
  const fs::path path =
      fs::temp_directory_path() / ("planmill_bench_export_" + std::to_string(getpid()) + ".h5");
  double bytes = 0;
  for (auto _ : bench) {
    PlanMatrixWriter writer(path.string(), header);
    for (std::size_t p = 0; p < kPlans; ++p) {
      writer.add(0, p, 2000 + (p + 1) * interval,
                 std::span<const DistrictIndex>(plans.data() + p * n, n));
    }
    writer.close();
    bytes = static_cast<double>(fs::file_size(path));
  }
  fs::remove(path);
  bench.counters["bytes_per_plan"] = bytes / kPlans;
  bench.counters["bits_per_unit"] = bytes * 8.0 / kPlans / static_cast<double>(n);
  bench.counters["plans_per_second"] = benchmark::Counter(
      static_cast<double>(kPlans), benchmark::Counter::kIsIterationInvariantRate);
}
BENCHMARK(BM_PlanMatrixWrite)
    ->Arg(10)
    ->Arg(100)
    ->ArgName("interval")
    ->Unit(benchmark::kSecond)
    ->UseRealTime()
    ->Iterations(3);

}  // namespace

BENCHMARK_MAIN();
