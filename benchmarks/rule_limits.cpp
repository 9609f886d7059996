// The cost of the hard limits in the rule tracker, on the benchmark state of bench_kernels (`synth`
// with 10,000 units and 100 districts, seed 7, a random seed plan at ±5%).
// BM_MoveAndCheck/<v>: one unit moved to a neighbour's district and back, with the tracker's
// limits_ok after each move (as a flip step does):
//   /0 no limit set; /1 overall range kept by the tracker (lazy extremes, rescanned only when the
//   largest district shrinks or the smallest grows); /2 the same test by an O(k) scan of the
//   district populations after each move (what the tracker would cost without its extremes);
//   /3 every limit at once (range, county pieces and districts per county, a group count).
// BM_FlipStep/<v>: whole flip steps with (1) and without (0) the range rule.
//   build/benchmarks/bench_rule_limits --benchmark_min_time=2
#include <benchmark/benchmark.h>

#include <algorithm>
#include <filesystem>
#include <memory>
#include <vector>

#include "planmill/chain/chain.hpp"
#include "synth_state.hpp"

namespace {

using namespace planmill;

const bench::SynthState& benchmark_state() {
  static const bench::SynthState state = bench::make_synth_state("limits");
  return state;
}

RuleSet limits(int variant) {
  RuleSet r;
  r.population_tolerance = 0.05;
  if (variant == 1 || variant == 3) r.population_range_max = 0.5;  // loose: the check runs, rarely fails
  if (variant == 3) {
    r.county_pieces_max = 100'000;
    r.county_districts_max = 100;
    r.group_share = {{0, 0.5, 0.0, 0, 100}};
  }
  return r;
}

void BM_MoveAndCheck(benchmark::State& bench) {
  const auto& s = benchmark_state();
  const int variant = static_cast<int>(bench.range(0));
  Plan plan = s.start;
  RuleTracker tracker(plan, limits(variant == 2 ? 0 : variant));
  Rng rng = make_stream(7, 5);
  const auto n = static_cast<std::uint32_t>(plan.unit_count());
  std::int64_t sink = 0;
  const auto check = [&] {
    if (variant == 2) {
      std::int64_t lo = plan.population(0), hi = lo;
      for (DistrictIndex d = 1; d < 100; ++d) {
        lo = std::min(lo, plan.population(d));
        hi = std::max(hi, plan.population(d));
      }
      sink += hi - lo;
    }
    sink += tracker.limits_ok(plan) ? 1 : 0;
  };
  for (auto _ : bench) {
    const UnitIndex u = uniform_below(rng, n);
    const auto nb = s.graph->neighbors(u);
    const DistrictIndex from = plan.district_of(u);
    const DistrictIndex to = plan.district_of(nb[uniform_below(rng, static_cast<std::uint32_t>(nb.size()))]);
    tracker.move(plan, u, to);
    check();
    tracker.move(plan, u, from);
    check();
  }
  benchmark::DoNotOptimize(sink);
}

void BM_FlipStep(benchmark::State& bench) {
  const auto& s = benchmark_state();
  ChainSetup setup;
  setup.graph = s.graph;
  setup.rules = limits(static_cast<int>(bench.range(0)));
  setup.rules.cut_edges_weight = 0.5;
  setup.kernel.kind = KernelKind::flip;
  Chain chain(setup, s.start);
  for (int i = 0; i < 2000; ++i) chain.step();
  for (auto _ : bench) benchmark::DoNotOptimize(chain.step());
}

}  // namespace

BENCHMARK(BM_MoveAndCheck)->Arg(0)->Arg(1)->Arg(2)->Arg(3)->Unit(benchmark::kNanosecond);
BENCHMARK(BM_FlipStep)->Arg(0)->Arg(1)->Unit(benchmark::kMicrosecond);

BENCHMARK_MAIN();
