// Map ingest on synth's GeoJSON (planar, km): `synth --units N --seed 7`, read with GDAL,
// measured, grid-indexed adjacency through GEOS, three files written. One iteration = one
// `ingest_map` call (the CLI's work). Arguments: units, mode (0 rook, 1 queen, 2 rook with
// --snap 0.001 km). Counter: units per second.
//   build/benchmarks/bench_ingest
#include <benchmark/benchmark.h>
#include <unistd.h>

#include <filesystem>
#include <map>

#include "planmill/ingest/ingest.hpp"
#include "planmill/synth/synth.hpp"

namespace {

using namespace planmill;
namespace fs = std::filesystem;

fs::path scratch() { return fs::temp_directory_path() / ("planmill_bench_ingest_" + std::to_string(getpid())); }

fs::path state(std::size_t units) {
  static std::map<std::size_t, fs::path> made;
  auto& dir = made[units];
  if (dir.empty()) {
    dir = scratch() / ("state" + std::to_string(units));
    (void)write_synthetic_state({units, 100, 7, dir.string()});
  }
  return dir;
}

void BM_Ingest(benchmark::State& st) {
  const auto units = static_cast<std::size_t>(st.range(0));
  IngestOptions o;
  o.map_path = (state(units) / "units.geojson").string();
  o.id_field = "unit";
  o.out_dir = (scratch() / "out").string();
  o.planar = true;
  o.keep = {"county", "town"};
  o.queen = st.range(1) == 1;
  o.snap = st.range(1) == 2 ? 0.001 : 0;
  for (auto _ : st) benchmark::DoNotOptimize(ingest_map(o));
  st.counters["units_per_s"] = benchmark::Counter(static_cast<double>(units), benchmark::Counter::kIsIterationInvariantRate);
}
BENCHMARK(BM_Ingest)->Args({10000, 0})->Args({10000, 1})->Args({10000, 2})->Args({40000, 0})->Unit(benchmark::kSecond)->Iterations(1);

}  // namespace

int main(int argc, char** argv) {
  benchmark::Initialize(&argc, argv);
  benchmark::RunSpecifiedBenchmarks();
  fs::remove_all(scratch());
  return 0;
}
