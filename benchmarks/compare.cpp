// The comparison core (compare_scalar, compare_vector) over a million recorded plans of 100
// districts on one core (goal: under a minute): 4 chains x 250,000 records, 20 scalar measures
// and 2 sorted-position vectors of 100 positions (1.6 GB of draws in memory), the shape of a run
// with one election and one group. Reading the run folder is not timed. PLANMILL_BENCH_PLANS=N
// for a smaller run.
#include <benchmark/benchmark.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdlib>
#include <ctime>
#include <numbers>
#include <string>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/compare/comparison.hpp"

namespace {

constexpr std::size_t kChains = 4, kScalars = 20, kVectors = 2, kDistricts = 100;

std::size_t draws_per_chain() {
  const char* env = std::getenv("PLANMILL_BENCH_PLANS");
  return (env != nullptr ? std::strtoul(env, nullptr, 10) : 1'000'000) / kChains;
}

double normal(planmill::Rng& rng) {
  const double u1 = 1.0 - planmill::uniform01(rng), u2 = planmill::uniform01(rng);
  return std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * std::numbers::pi * u2);
}

struct Data {
  std::vector<planmill::compare::ScalarTable> scalars;
  std::vector<planmill::compare::VectorTable> vectors;
  std::vector<double> plan_scalars;
  std::vector<std::vector<double>> plan_vectors;
};

// AR(1) draws (phi 0.9), some rounded to whole numbers like seat counts; vectors are sorted
// shares around 0.5.
const Data& data() {
  static const Data d = [] {
    const std::size_t draws = draws_per_chain();
    Data out;
    for (std::size_t s = 0; s < kScalars; ++s) {
      planmill::compare::ScalarTable t{"s" + std::to_string(s), std::vector<double>(draws * kChains), draws, kChains};
      for (std::size_t c = 0; c < kChains; ++c) {
        planmill::Rng rng = planmill::make_stream(s, c);
        double x = 0.0;
        for (std::size_t i = 0; i < draws; ++i) {
          x = 0.9 * x + std::sqrt(1 - 0.81) * normal(rng);
          t.values[c * draws + i] = s % 3 == 0 ? std::round(5.0 * x) : x;
        }
      }
      out.scalars.push_back(std::move(t));
      out.plan_scalars.push_back(s % 2 == 0 ? 1.5 : 9.0);  // in the tail, and beyond every draw
    }
    for (std::size_t v = 0; v < kVectors; ++v) {
      planmill::compare::VectorTable t{"v" + std::to_string(v), std::vector<double>(draws * kChains * kDistricts),
                                       draws, kChains, kDistricts};
      for (std::size_t c = 0; c < kChains; ++c) {
        planmill::Rng rng = planmill::make_stream(100 + v, c);
        for (std::size_t i = 0; i < draws; ++i) {
          double* row = &t.values[(c * draws + i) * kDistricts];
          for (std::size_t j = 0; j < kDistricts; ++j) row[j] = 0.5 + 0.1 * normal(rng);
          std::sort(row, row + kDistricts);
        }
      }
      std::vector<double> plan(kDistricts);
      for (std::size_t j = 0; j < kDistricts; ++j) plan[j] = 0.3 + 0.4 * static_cast<double>(j) / kDistricts;
      out.vectors.push_back(std::move(t));
      out.plan_vectors.push_back(std::move(plan));
    }
    return out;
  }();
  return d;
}

double cpu_seconds() {
  timespec t{};
  ::clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
  return static_cast<double>(t.tv_sec) + 1e-9 * static_cast<double>(t.tv_nsec);
}

void BM_Compare_1M_Plans_100_Districts(benchmark::State& state) {
  const Data& d = data();  // made outside the timing
  double scalar_cpu = 0.0, vector_cpu = 0.0;
  for (auto _ : state) {
    const auto start = std::chrono::steady_clock::now();
    const double c0 = cpu_seconds();
    for (std::size_t s = 0; s < kScalars; ++s) {
      auto r = planmill::compare::compare_scalar(d.scalars[s], d.plan_scalars[s]);
      benchmark::DoNotOptimize(r);
    }
    const double c1 = cpu_seconds();
    for (std::size_t v = 0; v < kVectors; ++v) {
      auto r = planmill::compare::compare_vector(d.vectors[v], d.plan_vectors[v]);
      benchmark::DoNotOptimize(r);
    }
    scalar_cpu = c1 - c0;
    vector_cpu = cpu_seconds() - c1;
    state.SetIterationTime(std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count());
  }
  state.counters["plans"] = static_cast<double>(draws_per_chain() * kChains);
  state.counters["scalars_cpu_s"] = scalar_cpu;
  state.counters["vectors_cpu_s"] = vector_cpu;
}
BENCHMARK(BM_Compare_1M_Plans_100_Districts)->UseManualTime()->Unit(benchmark::kSecond)->Iterations(1);

}  // namespace

BENCHMARK_MAIN();
