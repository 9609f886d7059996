// Large county tree weights: proposals per second, outcomes and county splits of recombination
// and merge-split (γ = 0 and γ = 1) on the benchmark state (`synth` 10,000 units, 100 districts,
// ±5%), for sampler.tree_weight_county = 1, 4, 30, 300, 10^4 and 10^6 (the largest the job
// allows). A larger weight keeps Wilson's walks inside counties longer and makes balanced edges
// inside counties rarer, so this shows what a weight costs and what it buys (mean county splits
// over the timed steps). merge-split's γ = 1 needs no tree count; γ = 0 does, with the weighted
// Laplacian, whose entries span the weights' range.
//   build/benchmarks/bench_tree_weights --benchmark_min_time=3
#include <benchmark/benchmark.h>

#include <algorithm>
#include <cstdint>

#include "planmill/chain/chain.hpp"
#include "synth_state.hpp"

namespace {

using namespace planmill;

const bench::SynthState& benchmark_state() {
  static const bench::SynthState state = bench::make_synth_state("tree_weights");
  return state;
}

constexpr double kWeights[] = {1.0, 4.0, 30.0, 300.0, 1e4, 1e6};

void run(benchmark::State& bench, KernelKind kind, double gamma) {
  const bench::SynthState& s = benchmark_state();
  ChainSetup setup;
  setup.graph = s.graph;
  setup.rules.population_tolerance = 0.05;
  setup.kernel.kind = kind;
  setup.kernel.gamma = gamma;
  setup.kernel.county_tree_weight = kWeights[bench.range(0)];
  Chain chain(setup, s.start);
  // Warm the buffers and leave the seed plan: 2,000 steps, fewer for the slow large weights.
  const auto warm = static_cast<int>(std::min(2000.0, 2e5 / setup.kernel.county_tree_weight));
  for (int i = 0; i < std::max(warm, 2); ++i) chain.step();
  const ChainCounters before = chain.counters();
  double splits = 0.0;
  for (auto _ : bench) {
    benchmark::DoNotOptimize(chain.step());
    splits += static_cast<double>(chain.state().rules.county_splits());
  }
  const ChainCounters& after = chain.counters();
  const auto steps = static_cast<double>(after.steps - before.steps);
  bench.SetItemsProcessed(static_cast<std::int64_t>(steps));
  bench.counters["weight"] = kWeights[bench.range(0)];
  bench.counters["county_splits"] = splits / steps;
  const char* names[] = {"accepted", "rejected", "no_cut", "invalid"};
  for (std::size_t i = 0; i < kStepResultCount; ++i)
    bench.counters[names[i]] = static_cast<double>(after.outcomes[i] - before.outcomes[i]) / steps;
}

void BM_RecombinationCountyWeight(benchmark::State& s) { run(s, KernelKind::recombination, 0.0); }
void BM_MergeSplitGamma1CountyWeight(benchmark::State& s) { run(s, KernelKind::merge_split, 1.0); }
void BM_MergeSplitGamma0CountyWeight(benchmark::State& s) { run(s, KernelKind::merge_split, 0.0); }

BENCHMARK(BM_RecombinationCountyWeight)->DenseRange(0, 5)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_MergeSplitGamma1CountyWeight)->DenseRange(0, 5)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_MergeSplitGamma0CountyWeight)->DenseRange(0, 5)->Unit(benchmark::kMicrosecond);

}  // namespace

BENCHMARK_MAIN();
