// Proposals per second of each kernel on the benchmark state: `synth` with 10,000 units and 100
// districts (seed 7), rules at ±5% population deviation, a chain started from a random seed plan.
// One proposal = one Chain::step(), whatever its outcome (accepted, rejected, no balanced cut,
// invalid). Counters report the outcome fractions.
//   build/benchmarks/bench_kernels --benchmark_min_time=3
#include <benchmark/benchmark.h>
#include <unistd.h>

#include <filesystem>
#include <memory>

#include "planmill/chain/chain.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/synth/synth.hpp"

namespace {

using namespace planmill;

struct State {
  UnitGraph graph;
  Plan start;
};

const State& benchmark_state() {
  static const std::unique_ptr<State> state = [] {
    const auto dir = std::filesystem::temp_directory_path() / ("planmill_bench_kernels_" + std::to_string(getpid()));
    (void)write_synthetic_state({10000, 100, 7, dir.string()});
    JobSpec job = load_job((dir / "job.toml").string());
    UnitGraph graph = load_unit_graph(job.map);
    std::filesystem::remove_all(dir);
    RuleSet rules;
    rules.population_deviation = 0.05;
    Rng rng = make_stream(7, 99);
    Plan start = random_seed_plan(graph, 100, rules, rng);
    auto s = std::make_unique<State>(State{std::move(graph), start});
    s->start = Plan(s->graph, 100, std::vector<DistrictIndex>(start.assignment().begin(), start.assignment().end()));
    return s;
  }();
  return *state;
}

void run_kernel(benchmark::State& bench, KernelKind kind, double gamma, double cut_weight) {
  const State& s = benchmark_state();
  ChainSetup setup;
  setup.graph = &s.graph;
  setup.rules.population_deviation = 0.05;
  setup.rules.cut_edges_weight = cut_weight;
  setup.kernel.kind = kind;
  setup.kernel.gamma = gamma;
  setup.kernel.beta = 1.0;
  Chain chain(setup, s.start);
  for (int i = 0; i < 2000; ++i) chain.step();  // warm the buffers and leave the seed plan
  const ChainCounters before = chain.counters();
  for (auto _ : bench) benchmark::DoNotOptimize(chain.step());
  const ChainCounters& after = chain.counters();
  const auto steps = static_cast<double>(after.steps - before.steps);
  bench.SetItemsProcessed(static_cast<std::int64_t>(steps));
  const char* names[] = {"accepted", "rejected", "no_cut", "invalid"};
  for (std::size_t i = 0; i < kStepResultCount; ++i)
    bench.counters[names[i]] = static_cast<double>(after.outcomes[i] - before.outcomes[i]) / steps;
}

void BM_Recombination(benchmark::State& s) { run_kernel(s, KernelKind::recombination, 0.0, 0.0); }
void BM_MergeSplitTreeLaw(benchmark::State& s) { run_kernel(s, KernelKind::merge_split, 1.0, 0.0); }
void BM_MergeSplitUniform(benchmark::State& s) { run_kernel(s, KernelKind::merge_split, 0.0, 0.0); }
void BM_FlipCutEdges(benchmark::State& s) { run_kernel(s, KernelKind::flip, 0.0, 0.5); }

BENCHMARK(BM_Recombination)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_MergeSplitTreeLaw)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_MergeSplitUniform)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_FlipCutEdges)->Unit(benchmark::kMicrosecond);

}  // namespace

BENCHMARK_MAIN();
