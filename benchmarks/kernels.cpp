// Proposals per second of each kernel on the benchmark state: `synth` with 10,000 units and 100
// districts (seed 7), rules at ±5% population deviation, a chain started from a random seed plan.
// One proposal = one Chain::step(), whatever its outcome (accepted, rejected, no balanced cut,
// invalid). Counters report the outcome fractions. BM_TreeCount / BM_TreeCountEigen time the
// spanning-tree count that merge-split needs for γ != 1, ours and Eigen's, on regions of that state.
// BM_Measures times MeasureEvaluator::evaluate on recombination plans of that state (default
// measures: 2 elections, 1 group, compactness, county and municipality splits), /0 with the
// chain's split tallies, /1 recounting the splits; BM_RecombinationWithMeasures is a recombination
// step followed by evaluate, as a run recording every step would do.
//   build/benchmarks/bench_kernels --benchmark_min_time=3
#include <benchmark/benchmark.h>
#include <unistd.h>

#include <Eigen/SparseCholesky>
#include <Eigen/SparseCore>
#include <cmath>
#include <filesystem>
#include <memory>
#include <utility>
#include <vector>

#include "planmill/chain/chain.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/measures/measures.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/synth/synth.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/tree_count.hpp"
#include "synth_state.hpp"

namespace {

using namespace planmill;

using State = bench::SynthState;

const State& benchmark_state() {
  static const State state = bench::make_synth_state("kernels");
  return state;
}

void run_kernel(benchmark::State& bench, KernelKind kind, double gamma, double cut_weight) {
  const State& s = benchmark_state();
  ChainSetup setup;
  setup.graph = s.graph;
  setup.rules.population_tolerance = 0.05;
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

ChainSetup recombination_setup(const State& s) {
  ChainSetup setup;
  setup.graph = s.graph;
  setup.rules.population_tolerance = 0.05;
  setup.kernel.kind = KernelKind::recombination;
  return setup;
}

SplitSources tracked_splits(const ChainState& state) {
  return {&state.rules.county_tally(), &state.rules.municipality_tally()};
}

void BM_Measures(benchmark::State& bench) {
  const State& s = benchmark_state();
  Chain chain(recombination_setup(s), s.start);
  for (int i = 0; i < 2000; ++i) chain.step();
  std::vector<ChainState> states;  // 64 plans, 50 steps apart
  for (int p = 0; p < 64; ++p) {
    for (int i = 0; i < 50; ++i) chain.step();
    states.push_back(chain.state());
  }
  MeasureEvaluator measures(s.graph, 100, default_measure_spec(*s.graph));
  const bool tracked = bench.range(0) == 0;
  std::size_t p = 0;
  for (auto _ : bench) {
    measures.evaluate(states[p].plan, tracked ? tracked_splits(states[p]) : SplitSources{});
    benchmark::DoNotOptimize(measures.scalars().data());
    if (++p == states.size()) p = 0;
  }
  bench.counters["scalars"] = static_cast<double>(measures.scalar_names().size());
  bench.counters["sorted_vectors"] = static_cast<double>(measures.vector_names().size());
}

void BM_RecombinationWithMeasures(benchmark::State& bench) {
  const State& s = benchmark_state();
  Chain chain(recombination_setup(s), s.start);
  for (int i = 0; i < 2000; ++i) chain.step();
  MeasureEvaluator measures(s.graph, 100, default_measure_spec(*s.graph));
  for (auto _ : bench) {
    benchmark::DoNotOptimize(chain.step());
    measures.evaluate(chain.state().plan, tracked_splits(chain.state()));
    benchmark::DoNotOptimize(measures.scalars().data());
  }
}
void BM_MergeSplitTreeLaw(benchmark::State& s) { run_kernel(s, KernelKind::merge_split, 1.0, 0.0); }
void BM_MergeSplitUniform(benchmark::State& s) { run_kernel(s, KernelKind::merge_split, 0.0, 0.0); }
void BM_MergeSplitHalfGamma(benchmark::State& s) {
  run_kernel(s, KernelKind::merge_split, 0.5, 0.0);
}
void BM_FlipCutEdges(benchmark::State& s) { run_kernel(s, KernelKind::flip, 0.0, 0.5); }

// log τ alone, cycling over regions of the start plan: argument 0 = single districts (what
// merge-split counts for γ != 1, ~100 units), 1 = pairs of adjacent districts (~200 units),
// 2 = a district with the districts within two steps of it (~1,900 units; first 20 districts).
std::vector<Region> count_regions(int kind) {
  const State& s = benchmark_state();
  const std::size_t k = s.start.district_count();
  std::vector<std::vector<std::uint8_t>> adjacent(k, std::vector<std::uint8_t>(k, 0));
  for (UnitIndex u = 0; u < s.graph->unit_count(); ++u)
    for (const UnitIndex w : s.graph->neighbors(u))
      adjacent[s.start.district_of(u)][s.start.district_of(w)] = 1;
  std::vector<Region> regions;
  for (DistrictIndex a = 0; a < k; ++a) {
    if (kind == 0) regions.emplace_back().build(s.start, a, a);
    if (kind == 1)
      for (DistrictIndex b = a + 1; b < k; ++b)
        if (adjacent[a][b]) regions.emplace_back().build(s.start, a, b);
    if (kind == 2 && a < 20) {
      std::vector<std::uint8_t> near = adjacent[a];
      for (DistrictIndex b = 0; b < k; ++b)
        if (adjacent[a][b])
          for (DistrictIndex c = 0; c < k; ++c) near[c] |= adjacent[b][c];
      std::vector<UnitIndex> units;
      for (UnitIndex u = 0; u < s.graph->unit_count(); ++u)
        if (near[s.start.district_of(u)]) units.push_back(u);
      regions.emplace_back().build(*s.graph, units);
    }
  }
  return regions;
}

void report_sizes(benchmark::State& bench, const std::vector<Region>& regions) {
  double units = 0;
  for (const Region& r : regions) units += r.size();
  bench.counters["regions"] = static_cast<double>(regions.size());
  bench.counters["mean_units"] = units / static_cast<double>(regions.size());
}

// Times counter.log_count over the regions in turn; factor_entries(counter) is the fill of the
// last factor.
template <class Counter, class FactorEntries>
void time_tree_counts(benchmark::State& bench, Counter& counter, FactorEntries factor_entries) {
  const std::vector<Region> regions = count_regions(static_cast<int>(bench.range(0)));
  double fill = 0;
  for (const Region& r : regions) {
    benchmark::DoNotOptimize(counter.log_count(r));
    fill += static_cast<double>(factor_entries(counter));
  }
  std::size_t i = 0;
  for (auto _ : bench) {
    benchmark::DoNotOptimize(counter.log_count(regions[i]));
    if (++i == regions.size()) i = 0;
  }
  report_sizes(bench, regions);
  bench.counters["mean_factor_entries"] = fill / static_cast<double>(regions.size());
}

void BM_TreeCount(benchmark::State& bench) {
  TreeCounter counter;
  time_tree_counts(bench, counter, [](const TreeCounter& c) { return c.factor_entries(); });
}

// The same log det by Eigen's SimplicialLLT (AMD ordering), the reference timing.
struct EigenCounter {
  std::vector<Eigen::Triplet<double>> triplets;
  Eigen::SparseMatrix<double> laplacian;
  Eigen::SimplicialLLT<Eigen::SparseMatrix<double>> cholesky;

  double log_count(const Region& r) {
    const auto m = static_cast<int>(r.size()) - 1;
    triplets.clear();
    for (int u = 0; u < m; ++u) {
      triplets.emplace_back(u, u, static_cast<double>(r.degree(u)));
      for (const std::uint32_t w : r.neighbors(u))
        if (static_cast<int>(w) < m) triplets.emplace_back(u, w, -1.0);
    }
    laplacian.resize(m, m);
    laplacian.setFromTriplets(triplets.begin(), triplets.end());
    cholesky.compute(laplacian);
    double log_det = 0;
    // SimplicialLLT keeps the diagonal first in each column of L.
    const Eigen::SparseMatrix<double>& l = cholesky.matrixL().nestedExpression();
    for (int j = 0; j < m; ++j) log_det += std::log(l.valuePtr()[l.outerIndexPtr()[j]]);
    return 2.0 * log_det;
  }
};

void BM_TreeCountEigen(benchmark::State& bench) {
  EigenCounter counter;
  time_tree_counts(bench, counter, [](const EigenCounter& c) {
    return c.cholesky.matrixL().nestedExpression().nonZeros();
  });
}

BENCHMARK(BM_Recombination)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_RecombinationWithMeasures)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_Measures)->Arg(0)->Arg(1)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_MergeSplitTreeLaw)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_MergeSplitUniform)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_MergeSplitHalfGamma)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_FlipCutEdges)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_TreeCount)->Arg(0)->Arg(1)->Arg(2)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_TreeCountEigen)->Arg(0)->Arg(1)->Arg(2)->Unit(benchmark::kMicrosecond);

}  // namespace

BENCHMARK_MAIN();
