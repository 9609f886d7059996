// Ensemble store cost on the benchmark state (`synth` 10,000 units, 100 districts, seed 7, ±5%):
// a recombination chain recording every 1 to 10,000 steps into an ensemble file that carries the
// unit adjacency. One iteration = one chain step (plus a record every `interval` steps).
// Counters: file bytes per recorded plan (after flush, leaving out the fixed cost of a file:
// header, unit adjacency, HDF5 metadata, counter fixed_file_bytes), encoded bytes per record
// before deflate, and bits per unit per recorded plan. BM_ChainOnly is the same chain without
// recording, for the relative write cost (per-record clock reads would cost more than they
// measure: use perf for the share of the writer); BM_GraphRecord times the self-contained record
// kind. With hint = 1 the chain's list of moved units (Plan::changes()) goes to record(), as the
// runner passes it.
//   build/benchmarks/bench_store --benchmark_min_time=3
#include <benchmark/benchmark.h>
#include <unistd.h>

#include <filesystem>
#include <memory>

#include "planmill/chain/chain.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/store/ensemble.hpp"
#include "planmill/synth/synth.hpp"

namespace {

using namespace planmill;
namespace fs = std::filesystem;

struct State {
  GraphHandle graph;
  Plan start;
};

const State& benchmark_state() {
  static const std::unique_ptr<State> state = [] {
    const auto dir =
        fs::temp_directory_path() / ("planmill_bench_store_" + std::to_string(getpid()));
    (void)write_synthetic_state({10000, 100, 7, dir.string()});
    JobSpec job = load_job((dir / "job.toml").string());
    GraphHandle graph = share_graph(load_unit_graph(job.map));
    fs::remove_all(dir);
    RuleSet rules;
    rules.population_tolerance = 0.05;
    Rng rng = make_stream(7, 99);
    Plan start = random_seed_plan(graph, 100, rules, rng);
    auto s = std::make_unique<State>(State{std::move(graph), start});
    s->start =
        Plan(s->graph, 100,
             std::vector<DistrictIndex>(start.assignment().begin(), start.assignment().end()));
    return s;
  }();
  return *state;
}

Chain make_chain(const State& s) {
  ChainSetup setup;
  setup.graph = s.graph;
  setup.rules.population_tolerance = 0.05;
  setup.kernel.kind = KernelKind::recombination;
  Chain chain(setup, s.start);
  for (int i = 0; i < 2000; ++i) chain.step();  // warm the buffers and leave the seed plan
  return chain;
}

void BM_ChainOnly(benchmark::State& bench) {
  Chain chain = make_chain(benchmark_state());
  for (auto _ : bench) benchmark::DoNotOptimize(chain.step());
  bench.SetItemsProcessed(bench.iterations());
}

// Size of an ensemble file holding the header, the unit adjacency and an empty chain: the fixed
// cost of a file, left out of the bytes per record.
double empty_file_bytes(const State& s, const fs::path& path) {
  {
    EnsembleWriter writer(path.string(), {s.graph->unit_count(), 100, "", unit_adjacency(*s.graph)});
    (void)writer.add_chain(0, {"cut_edges", "max_population_deviation"});
    writer.close();
  }
  const auto bytes = static_cast<double>(fs::file_size(path));
  fs::remove(path);
  return bytes;
}

void BM_ChainRecording(benchmark::State& bench) {
  const State& s = benchmark_state();
  const auto interval = static_cast<std::uint64_t>(bench.range(0));
  const bool hint = bench.range(2) == 1;
  Chain chain = make_chain(s);
  const fs::path path =
      fs::temp_directory_path() / ("planmill_bench_store_" + std::to_string(getpid()) + ".h5");
  const double fixed_bytes = empty_file_bytes(s, path);
  std::uint64_t records = 0;
  std::uint64_t encoded = 0;
  {
    EnsembleWriterOptions options;
    options.full_every = static_cast<std::size_t>(bench.range(1));
    EnsembleWriter writer(path.string(), {s.graph->unit_count(), 100, "", unit_adjacency(*s.graph)},
                          options);
    const std::size_t h = writer.add_chain(0, {"cut_edges", "max_population_deviation"});
    std::uint64_t step = 0;
    for (auto _ : bench) {
      chain.step();
      if (++step % interval == 0) {
        const Plan& p = chain.state().plan;
        const double obs[] = {static_cast<double>(p.cut_edge_count()),
                              p.max_population_deviation()};
        if (hint) {
          writer.record(h, step, p.assignment(), obs, p.changes());
          chain.clear_plan_changes();
        } else {
          writer.record(h, step, p.assignment(), obs);
        }
        ++records;
      }
    }
    writer.close();
    encoded = writer.encoded_bytes();
  }
  const auto file_bytes = static_cast<double>(fs::file_size(path));
  fs::remove(path);
  const double per_record = records ? (file_bytes - fixed_bytes) / static_cast<double>(records) : 0;
  bench.SetItemsProcessed(bench.iterations());
  bench.counters["records"] = static_cast<double>(records);
  bench.counters["fixed_file_bytes"] = fixed_bytes;
  bench.counters["file_bytes_per_record"] = per_record;
  bench.counters["encoded_bytes_per_record"] =
      records ? static_cast<double>(encoded) / static_cast<double>(records) : 0;
  bench.counters["bits_per_unit"] = per_record * 8.0 / static_cast<double>(s.graph->unit_count());
}

// The writer alone: record() on 1,000 plans of the chain taken `interval` steps apart, replayed
// in a loop (one jump back to the first plan per 1,000 records). No chain runs in between, so this
// is the write cost per record without the chain's use of the caches.
void BM_WriterOnly(benchmark::State& bench) {
  const State& s = benchmark_state();
  const auto interval = static_cast<std::size_t>(bench.range(0));
  Chain chain = make_chain(s);
  constexpr std::size_t kPlans = 1000;
  const std::size_t n = s.graph->unit_count();
  std::vector<DistrictIndex> plans(kPlans * n);
  std::vector<double> observables(2 * kPlans);
  for (std::size_t r = 0; r < kPlans; ++r) {
    for (std::size_t i = 0; i < interval; ++i) (void)chain.step();
    const Plan& p = chain.state().plan;
    std::copy(p.assignment().begin(), p.assignment().end(), plans.begin() + r * n);
    observables[2 * r] = static_cast<double>(p.cut_edge_count());
    observables[2 * r + 1] = p.max_population_deviation();
  }
  const fs::path path =
      fs::temp_directory_path() / ("planmill_bench_writer_" + std::to_string(getpid()) + ".h5");
  {
    EnsembleWriter writer(path.string(), {n, 100, "", unit_adjacency(*s.graph)});
    const std::size_t h = writer.add_chain(0, {"cut_edges", "max_population_deviation"});
    std::size_t r = 0;
    std::uint64_t step = 0;
    for (auto _ : bench) {
      writer.record(h, ++step, std::span(plans).subspan(r * n, n),
                    std::span(observables).subspan(2 * r, 2));
      if (++r == kPlans) r = 0;
    }
    writer.close();
  }
  fs::remove(path);
  bench.SetItemsProcessed(bench.iterations());
}

BENCHMARK(BM_WriterOnly)
    ->ArgName("interval")
    ->Arg(1)
    ->Arg(10)
    ->Arg(100)
    ->Unit(benchmark::kMicrosecond);

// Encoding and decoding one plan of the chain as a graph record (the self-contained kind).
void BM_GraphRecord(benchmark::State& bench) {
  const State& s = benchmark_state();
  Chain chain = make_chain(s);
  const UnitAdjacency adjacency = unit_adjacency(*s.graph);
  ChainEncoder encoder(s.graph->unit_count(), 100, &adjacency);
  std::vector<std::uint8_t> out;
  std::vector<DistrictIndex> decoded(s.graph->unit_count());
  const bool decode = bench.range(0) == 1;
  for (auto _ : bench) {
    out.clear();
    encoder.encode_graph(chain.state().plan.assignment(), out);
    if (decode)
      benchmark::DoNotOptimize(decode_record(RecordKind::graph, out, 1, 100, decoded, &adjacency));
  }
  bench.counters["bytes"] = static_cast<double>(out.size());
}

// Reading one plan back with read_plan (decode the nearest self-contained record, then the deltas
// after it): 2,048 records of the chain taken every step, self-contained every K records; the
// records read are spread evenly, so on average K / 2 deltas are decoded per plan.
void BM_ReadPlan(benchmark::State& bench) {
  const State& s = benchmark_state();
  Chain chain = make_chain(s);
  const fs::path path =
      fs::temp_directory_path() / ("planmill_bench_read_" + std::to_string(getpid()) + ".h5");
  constexpr std::size_t kRecords = 2048;
  {
    EnsembleWriterOptions options;
    options.full_every = static_cast<std::size_t>(bench.range(0));
    EnsembleWriter writer(path.string(), {s.graph->unit_count(), 100, "", unit_adjacency(*s.graph)},
                          options);
    const std::size_t h = writer.add_chain(0, {});
    for (std::size_t r = 0; r < kRecords; ++r) {
      (void)chain.step();
      writer.record(h, r, chain.state().plan.assignment(), {});
    }
    writer.close();
  }
  EnsembleReader reader(path.string());
  std::size_t r = 0;
  for (auto _ : bench) {
    benchmark::DoNotOptimize(reader.read_plan(0, r));
    r = (r + 97) % kRecords;  // 97 is prime to 2,048: every record in turn
  }
  fs::remove(path);
}

BENCHMARK(BM_ReadPlan)->ArgName("full_every")->Arg(128)->Arg(256)->Unit(benchmark::kMillisecond);
BENCHMARK(BM_GraphRecord)->ArgName("decode")->Arg(0)->Arg(1)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_ChainOnly)->Unit(benchmark::kMicrosecond);
// Args: recording interval, self-contained plan every K records (1 = self-contained only), and
// whether the chain's list of moved units is passed to the writer (hint = 1) or the writer
// compares every unit (0).
BENCHMARK(BM_ChainRecording)
    ->ArgNames({"interval", "full_every", "hint"})
    ->Args({1, 128, 0})
    ->Args({1, 128, 1})
    ->Args({1, 256, 0})
    ->Args({1, 256, 1})
    ->Args({10, 256, 0})
    ->Args({10, 256, 1})
    ->Args({100, 256, 0})
    ->Args({100, 256, 1})
    ->Args({100, 1, 1})
    ->Unit(benchmark::kMicrosecond);
// Long intervals: enough steps for 100 and 40 records.
BENCHMARK(BM_ChainRecording)
    ->ArgNames({"interval", "full_every", "hint"})
    ->Args({1000, 256, 1})
    ->Iterations(100000)
    ->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_ChainRecording)
    ->ArgNames({"interval", "full_every", "hint"})
    ->Args({10000, 256, 1})
    ->Iterations(400000)
    ->Unit(benchmark::kMicrosecond);

}  // namespace

BENCHMARK_MAIN();
