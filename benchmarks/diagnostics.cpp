// All diagnostics (diagnose_observable) for 50 quantities x 16 chains x 100,000 draws on one core
// (target < 10 s), then the R package posterior on the same data in the same run
// (diagnostics_posterior.R; target: planmill >= 10x faster). Set PLANMILL_BENCH_POSTERIOR=0 to
// skip R, PLANMILL_BENCH_DRAWS=N for a smaller run.
#include <benchmark/benchmark.h>
#include <sys/resource.h>
#include <unistd.h>

#include <chrono>
#include <ctime>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <string>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/diagnose/observable_diagnostics.hpp"

namespace {

constexpr std::size_t kQuantities = 50, kChains = 16;

std::size_t draws_per_chain() {
  const char* env = std::getenv("PLANMILL_BENCH_DRAWS");
  return env != nullptr ? std::strtoul(env, nullptr, 10) : 100000;
}

// Observables of different kinds: AR(1) with phi from 0 to 0.95, some rounded to integers
// (seat-count-like ties), some with a slow drift across chains.
const std::vector<std::vector<double>>& benchmark_data() {
  static const std::vector<std::vector<double>> data = [] {
    const std::size_t draws = draws_per_chain();
    std::vector<std::vector<double>> all(kQuantities, std::vector<double>(draws * kChains));
    for (std::size_t q = 0; q < kQuantities; ++q) {
      const double phi = 0.95 * static_cast<double>(q % 6) / 5.0;
      for (std::size_t c = 0; c < kChains; ++c) {
        planmill::Rng rng = planmill::make_stream(q, c);
        double x = 0.0;
        for (std::size_t t = 0; t < draws; ++t) {
          const double u1 = 1.0 - planmill::uniform01(rng), u2 = planmill::uniform01(rng);
          const double e = std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * std::numbers::pi * u2);
          x = phi * x + e;
          double v = x + (q % 7 == 3 ? 0.05 * static_cast<double>(c) : 0.0);
          if (q % 5 == 2) v = std::round(3.0 * v);
          all[q][c * draws + t] = v;
        }
      }
    }
    return all;
  }();
  return data;
}

double process_cpu_seconds() {
  timespec t{};
  ::clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
  return static_cast<double>(t.tv_sec) + 1e-9 * static_cast<double>(t.tv_nsec);
}

// CPU time (user + system) of finished child processes, for Rscript.
double children_cpu_seconds() {
  rusage u{};
  ::getrusage(RUSAGE_CHILDREN, &u);
  auto seconds = [](const timeval& v) {
    return static_cast<double>(v.tv_sec) + 1e-6 * static_cast<double>(v.tv_usec);
  };
  return seconds(u.ru_utime) + seconds(u.ru_stime);
}

double last_cpu_seconds = 0.0;

double run_all_diagnostics() {
  const auto& data = benchmark_data();
  const std::size_t draws = draws_per_chain();
  const double cpu_start = process_cpu_seconds();
  const auto start = std::chrono::steady_clock::now();
  for (std::size_t q = 0; q < kQuantities; ++q) {
    auto d = planmill::diagnose::diagnose_observable("q" + std::to_string(q),
                                                   {data[q], draws, kChains});
    benchmark::DoNotOptimize(d);
  }
  last_cpu_seconds = process_cpu_seconds() - cpu_start;
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

double last_seconds = 0.0;

void BM_AllDiagnostics_50x16x100k(benchmark::State& state) {
  benchmark_data();  // generated outside the timing
  for (auto _ : state) {
    last_seconds = run_all_diagnostics();
    state.SetIterationTime(last_seconds);
  }
  state.counters["cpu_seconds"] = last_cpu_seconds;
  state.counters["draws"] = static_cast<double>(kQuantities * kChains * draws_per_chain());
}
BENCHMARK(BM_AllDiagnostics_50x16x100k)->UseManualTime()->Unit(benchmark::kSecond)->Iterations(1);

// Returns posterior's own elapsed seconds; sets r_cpu_seconds to Rscript's CPU time (including
// its start-up and reading the data, a few seconds).
double r_cpu_seconds = -1.0;
double time_posterior() {
  const auto& data = benchmark_data();
  const auto path = std::filesystem::temp_directory_path() /
                    ("planmill_bench_diagnostics_" + std::to_string(::getpid()) + ".bin");
  {
    std::ofstream out(path, std::ios::binary);
    for (const auto& q : data) {
      out.write(reinterpret_cast<const char*>(q.data()),
                static_cast<std::streamsize>(q.size() * sizeof(double)));
    }
  }
  const std::string command = "Rscript '" + std::string(PLANMILL_SOURCE_DIR) +
                              "/benchmarks/diagnostics_posterior.R' '" + path.string() + "' " +
                              std::to_string(kQuantities) + " " + std::to_string(kChains) + " " +
                              std::to_string(draws_per_chain());
  double seconds = -1.0;
  const double children_before = children_cpu_seconds();
  if (FILE* pipe = ::popen(command.c_str(), "r")) {
    char line[256];
    while (std::fgets(line, sizeof line, pipe) != nullptr) {
      std::printf("%s", line);
      char version[32];
      if (std::sscanf(line, "posterior %31s seconds %lf", version, &seconds) != 2) seconds = -1.0;
    }
    ::pclose(pipe);
    r_cpu_seconds = children_cpu_seconds() - children_before;
  }
  std::filesystem::remove(path);
  return seconds;
}

}  // namespace

int main(int argc, char** argv) {
  benchmark::Initialize(&argc, argv);
  benchmark::RunSpecifiedBenchmarks();
  benchmark::Shutdown();
  const char* skip = std::getenv("PLANMILL_BENCH_POSTERIOR");
  if (last_seconds > 0.0 && (skip == nullptr || std::string(skip) != "0")) {
    const double r_seconds = time_posterior();
    if (r_seconds > 0.0) {
      std::printf("wall: planmill %.3f s, posterior %.3f s, ratio %.1fx\n", last_seconds,
                  r_seconds, r_seconds / last_seconds);
      std::printf("cpu: planmill %.3f s, Rscript %.3f s, ratio %.1fx\n", last_cpu_seconds,
                  r_cpu_seconds, r_cpu_seconds / last_cpu_seconds);
    } else {
      std::printf("posterior timing failed (is Rscript with library(posterior) installed?)\n");
    }
  }
  return 0;
}
