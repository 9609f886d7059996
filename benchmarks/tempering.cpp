// Does parallel tempering help? At equal total kernel steps (replicas x steps), independent flip
// chains at the target beta against ladders of R rungs whose target rung is recorded, on an
// invented state with two dense cities and a strong cut-edge weight. Prints, per setting, R-hat
// and bulk ESS of cut_edges and of party A's seats in the governor-type contest over the chains
// (or over the ladders' target rungs), swap acceptance per pair and round trips.
// A plain program (no Google Benchmark loop): one run takes minutes, not microseconds.
//   build/benchmarks/bench_tempering [key=value ...]   (keys: see Settings; defaults are the
//   ones reported in docs/performance.md, section "Tempering")
#include <unistd.h>

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <ctime>
#include <filesystem>
#include <sstream>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "planmill/chain/chain.hpp"
#include "planmill/diagnose/observable_diagnostics.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/measures/measures.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/synth/synth.hpp"
#include "planmill/temper/ladder.hpp"

namespace {

using namespace planmill;

struct Settings {
  std::uint64_t units = 400, districts = 3, cities = 2;
  std::uint64_t map_seed = 3, run_seed = 11;
  double cut_weight = 2.0, beta = 1.0, hottest = 0.5;
  std::uint64_t chains = 4;         // independent chains, and ladders
  std::uint64_t steps = 4'000'000;  // kernel steps per chain; a ladder of R rungs gets steps/R
  std::uint64_t draws = 2000;       // recorded per chain or ladder target rung
  std::uint64_t burn_in = 20'000;   // kernel steps per chain (ladders: burn_in / R each)
  std::uint64_t swap_every = 1;
  std::vector<std::uint64_t> rungs = {4, 8, 16};
};

void parse(Settings& s, const std::string& arg) {
  const auto eq = arg.find('=');
  if (eq == std::string::npos) throw std::invalid_argument("expected key=value, got " + arg);
  const std::string key = arg.substr(0, eq), value = arg.substr(eq + 1);
  const std::pair<const char*, std::uint64_t*> counts[] = {
      {"units", &s.units},          {"districts", &s.districts}, {"cities", &s.cities},
      {"map_seed", &s.map_seed},    {"run_seed", &s.run_seed},   {"chains", &s.chains},
      {"steps", &s.steps},          {"draws", &s.draws},         {"burn_in", &s.burn_in},
      {"swap_every", &s.swap_every}};
  const std::pair<const char*, double*> reals[] = {
      {"cut_weight", &s.cut_weight}, {"beta", &s.beta}, {"hottest", &s.hottest}};
  for (const auto& [name, field] : counts) {
    if (key == name) return void(*field = std::stoull(value));
  }
  for (const auto& [name, field] : reals) {
    if (key == name) return void(*field = std::stod(value));
  }
  if (key != "rungs") throw std::invalid_argument("unknown key " + key);
  s.rungs.clear();
  std::stringstream list(value);
  for (std::string item; std::getline(list, item, ',');) s.rungs.push_back(std::stoull(item));
}

struct Observed {
  std::size_t cut_edges, seats;  // indices into the observable vector
};

struct Result {
  std::string name;
  diagnose::ObservableDiagnostics cut, seats;
  std::vector<double> chain_cut_means, chain_seat_means;
  double cpu_seconds = 0.0;
  std::vector<double> swap_acceptance;  // mean over ladders, per pair
  std::uint64_t round_trips = 0;
  double mean_round_trip = NAN;  // ladder steps
};

double cpu_now() { return static_cast<double>(std::clock()) / CLOCKS_PER_SEC; }

// draws x chains matrices (column-major) of the two quantities, filled by `record(c, d)`.
struct Traces {
  std::vector<double> cut, seats;
  std::size_t draws, chains;
  MeasureEvaluator measures;
  Traces(std::size_t d, std::size_t c, const MeasureEvaluator& m)
      : cut(d * c), seats(d * c), draws(d), chains(c), measures(m) {}
  void record(const UnitGraph&, const ChainState& s, const Observed& o, std::size_t c,
              std::size_t d) {
    measures.evaluate(s.plan);
    cut[c * draws + d] = measures.scalars()[o.cut_edges];
    seats[c * draws + d] = measures.scalars()[o.seats];
  }
};

void finish(Result& r, Traces& t) {
  r.cut = diagnose::diagnose_observable("cut_edges", {t.cut, t.draws, t.chains});
  r.seats = diagnose::diagnose_observable("seats.gov.A", {t.seats, t.draws, t.chains});
  for (std::size_t c = 0; c < t.chains; ++c) {
    double a = 0, b = 0;
    for (std::size_t d = 0; d < t.draws; ++d)
      a += t.cut[c * t.draws + d], b += t.seats[c * t.draws + d];
    r.chain_cut_means.push_back(a / static_cast<double>(t.draws));
    r.chain_seat_means.push_back(b / static_cast<double>(t.draws));
  }
}

Result run_independent(const Settings& s, const ChainSetup& base, const std::vector<Plan>& starts,
                       const Observed& o, const MeasureEvaluator& measures) {
  Result r;
  r.name = std::to_string(s.chains) + " independent chains";
  const double t0 = cpu_now();
  Traces t(s.draws, s.chains, measures);
  const std::uint64_t thin = s.steps / s.draws;
  for (std::size_t c = 0; c < s.chains; ++c) {
    ChainSetup setup = base;
    setup.chain_index = c;
    Chain chain(setup, starts[c]);
    for (std::uint64_t i = 0; i < s.burn_in; ++i) chain.step();
    for (std::size_t d = 0; d < s.draws; ++d) {
      for (std::uint64_t i = 0; i < thin; ++i) chain.step();
      t.record(*base.graph, chain.state(), o, c, d);
    }
  }
  r.cpu_seconds = cpu_now() - t0;
  finish(r, t);
  return r;
}

Result run_ladders(const Settings& s, const ChainSetup& base, const std::vector<Plan>& starts,
                   const Observed& o, const MeasureEvaluator& measures, std::size_t rungs) {
  Result r;
  r.name = std::to_string(s.chains) + " ladders of " + std::to_string(rungs) + " rungs";
  const double t0 = cpu_now();
  Traces t(s.draws, s.chains, measures);
  const std::uint64_t ladder_steps = s.steps / rungs, thin = ladder_steps / s.draws;
  r.swap_acceptance.assign(rungs - 1, 0.0);
  double trip_steps = 0;
  for (std::size_t l = 0; l < s.chains; ++l) {
    LadderSetup setup;
    setup.chain = base;
    setup.ladder_index = l;
    setup.first_chain_index = l * rungs;
    setup.betas = geometric_betas(s.beta, s.hottest, rungs);
    setup.swap_every = s.swap_every;
    Ladder ladder(setup, {starts[l]});
    ladder.run(s.burn_in / rungs);
    ladder.reset_statistics();
    for (std::size_t d = 0; d < s.draws; ++d) {
      ladder.run(thin);
      t.record(*base.graph, ladder.on_rung(0).state(), o, l, d);
    }
    const LadderStatistics& st = ladder.statistics();
    for (std::size_t p = 0; p + 1 < rungs; ++p)
      r.swap_acceptance[p] += st.swap_acceptance(p) / static_cast<double>(s.chains);
    r.round_trips += st.round_trips;
    trip_steps += static_cast<double>(st.round_trip_steps);
  }
  r.mean_round_trip = r.round_trips ? trip_steps / static_cast<double>(r.round_trips) : NAN;
  r.cpu_seconds = cpu_now() - t0;
  finish(r, t);
  return r;
}

std::string means(const std::vector<double>& v) {
  std::string out;
  char buf[32];
  for (double x : v) {
    std::snprintf(buf, sizeof buf, "%s%.1f", out.empty() ? "" : " ", x);
    out += buf;
  }
  return out;
}

void print(const Result& r) {
  std::printf("| %s | %.3f | %.0f | %.3f | %.0f | %.1f |\n", r.name.c_str(), r.cut.rhat,
              r.cut.ess_bulk, r.seats.rhat, r.seats.ess_bulk, r.cpu_seconds);
}

void print_details(const Result& r) {
  std::printf(
      "%s: cut_edges mean %.2f sd %.2f, per chain [%s]; seats mean %.3f sd %.3f, per "
      "chain [%s]%s%s\n",
      r.name.c_str(), r.cut.mean, r.cut.sd, means(r.chain_cut_means).c_str(), r.seats.mean,
      r.seats.sd, means(r.chain_seat_means).c_str(),
      r.cut.note.empty() ? "" : "; cut note: ", r.cut.note.c_str());
  if (!r.swap_acceptance.empty()) {
    std::printf("  swap acceptance per pair:");
    for (double a : r.swap_acceptance) std::printf(" %.3f", a);
    std::printf("; round trips %llu, mean length %.0f ladder steps\n",
                static_cast<unsigned long long>(r.round_trips), r.mean_round_trip);
  }
}

}  // namespace

int main(int argc, char** argv) {
  Settings s;
  try {
    for (int i = 1; i < argc; ++i) parse(s, argv[i]);
    for (std::uint64_t rungs : s.rungs) {
      if (rungs < 2 || s.steps / rungs < s.draws)
        throw std::invalid_argument("each ladder needs >= 2 rungs and steps / rungs >= draws");
    }
    if (s.draws == 0 || s.steps < s.draws) throw std::invalid_argument("need steps >= draws > 0");
  } catch (const std::exception& e) {
    std::fprintf(stderr, "bench_tempering: %s\n", e.what());
    return 2;
  }
  const auto dir = std::filesystem::temp_directory_path() /
                   ("planmill_bench_tempering_" + std::to_string(getpid()));
  SynthOptions synth{s.units, s.districts, s.map_seed, dir.string()};
  synth.cities = s.cities;
  const SynthSummary summary = write_synthetic_state(synth);
  const JobSpec job = load_job((dir / "job.toml").string());
  const GraphHandle graph_handle = share_graph(load_unit_graph(job.map));
  const UnitGraph& graph = *graph_handle;
  std::filesystem::remove_all(dir);

  ChainSetup base;
  base.graph = graph_handle;
  base.rules.population_tolerance = 0.05;
  base.rules.cut_edges_weight = s.cut_weight;
  base.kernel.kind = KernelKind::flip;
  base.kernel.beta = s.beta;
  base.run_seed = s.run_seed;

  const MeasureEvaluator measures(graph_handle, s.districts, default_measure_spec(graph));
  const std::vector<std::string>& names = measures.scalar_names();
  const auto index_of = [&](const std::string& name) {
    for (std::size_t i = 0; i < names.size(); ++i) {
      if (names[i] == name) return i;
    }
    throw std::logic_error("no observable " + name);
  };
  const Observed o{index_of("compactness.cut_edges"), index_of("election.gov.seats.A")};
  std::vector<Plan> starts;
  for (std::size_t c = 0; c < s.chains; ++c) {
    Rng rng = make_stream(s.run_seed, 1000 + c);
    starts.push_back(random_seed_plan(graph_handle, s.districts, base.rules, rng));
  }

  std::printf(
      "state: synth --units %zu --districts %zu --seed %llu --cities %zu (%zu cities, "
      "%zu edges, party A %.1f%% in gov)\n",
      s.units, s.districts, static_cast<unsigned long long>(s.map_seed), s.cities, summary.cities,
      summary.edges, 100.0 * summary.elections[0].share_a);
  std::printf(
      "flip, beta %.3g, cut-edge weight %.3g, +-5%% population; %zu chains x %llu steps "
      "(after %llu burn-in), %llu draws each; ladders geometric down to beta %.3g, swap "
      "every %llu\n\n",
      s.beta, s.cut_weight, s.chains, static_cast<unsigned long long>(s.steps),
      static_cast<unsigned long long>(s.burn_in), static_cast<unsigned long long>(s.draws),
      s.hottest, static_cast<unsigned long long>(s.swap_every));

  std::vector<Result> results;
  results.push_back(run_independent(s, base, starts, o, measures));
  for (std::size_t rungs : s.rungs)
    results.push_back(run_ladders(s, base, starts, o, measures, rungs));

  std::printf(
      "| setting | R-hat cut_edges | bulk ESS cut_edges | R-hat seats | bulk ESS seats | "
      "CPU s |\n| --- | --- | --- | --- | --- | --- |\n");
  for (const Result& r : results) print(r);
  std::printf("\n");
  for (const Result& r : results) print_details(r);
  return 0;
}
