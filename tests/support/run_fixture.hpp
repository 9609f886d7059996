#pragma once
// A run folder written the way the runner writes one (real ensemble files, a committed
// run-state.json), with made-up plans and observables, for tests of the readers of a run
// (merge, export, diagnose). Plans are random labels, not valid plans: readers must not care.
//
//   auto run = planmill::test::write_fixture_run(dir, {.chains = 3, .segments = 2});
#include <cstdint>
#include <filesystem>
#include <map>
#include <string>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/run/run_state.hpp"
#include "planmill/store/ensemble.hpp"

namespace planmill::test {

struct FixtureRunOptions {
  std::uint64_t chains = 2;
  int ranks = 2;               // chain c is on rank c % ranks
  std::uint64_t segments = 2;  // checkpoint intervals, each with its own plan files
  std::uint64_t records_per_segment = 20;
  std::size_t units = 30;
  std::size_t districts = 3;
  std::uint64_t record_every = 5;
  std::uint64_t seed = 11;
};

struct FixtureRun {
  RunState state;
  // What was written, to compare readers with: per chain, plans and observable rows in order.
  std::map<std::uint64_t, std::vector<std::vector<DistrictIndex>>> plans;
  std::map<std::uint64_t, std::vector<std::vector<double>>> observables;
  std::map<std::uint64_t, std::vector<std::uint64_t>> steps;
};

inline FixtureRun write_fixture_run(const std::filesystem::path& dir, const FixtureRunOptions& o) {
  FixtureRun out;
  RunLayout layout{dir};
  std::filesystem::create_directories(layout.plans_dir());
  const std::string job_text = "# fixture job\n";
  auto& s = out.state;
  s.run_id = "fixture-run";
  s.planmill_version = "0";
  s.git_commit = "unknown";
  s.job_path = "job.toml";
  s.seed = o.seed;
  s.record_every = o.record_every;
  s.target_steps = o.segments * o.records_per_segment * o.record_every;
  s.observable_names = {"population_deviation", "cut_edges", "county_splits", "energy"};
  s.sessions.push_back({utc_now_iso8601(), utc_now_iso8601(), o.ranks,
                        std::vector<std::string>(static_cast<std::size_t>(o.ranks), "localhost"),
                        "finished"});
  for (std::uint64_t c = 0; c < o.chains; ++c) s.chains.push_back(ChainEntry{.index = c});
  Rng rng = make_stream(o.seed, 99);
  for (std::uint64_t seg = 0; seg < o.segments; ++seg) {
    for (int rank = 0; rank < o.ranks; ++rank) {
      const std::string name = RunLayout::plan_file_name(seg, rank);
      EnsembleWriter writer(layout.resolve(name).string(), {o.units, o.districts, job_text},
                            {.full_every = 8});
      bool any = false;
      for (auto& chain : s.chains) {
        if (static_cast<int>(chain.index % static_cast<std::uint64_t>(o.ranks)) != rank) continue;
        any = true;
        const auto handle = writer.add_chain(chain.index, s.observable_names);
        std::vector<DistrictIndex> plan(o.units);
        if (!out.plans[chain.index].empty()) plan = out.plans[chain.index].back();
        for (std::uint64_t r = 0; r < o.records_per_segment; ++r) {
          for (int flips = 0; flips < 3; ++flips) {
            plan[uniform_below(rng, static_cast<std::uint32_t>(o.units))] =
                static_cast<DistrictIndex>(uniform_below(rng, static_cast<std::uint32_t>(o.districts)));
          }
          std::vector<double> row = {uniform01(rng), static_cast<double>(uniform_below(rng, 40)),
                                     static_cast<double>(uniform_below(rng, 4)), uniform01(rng) * 10};
          chain.steps += o.record_every;
          writer.record(handle, chain.steps, plan, row);
          out.plans[chain.index].push_back(plan);
          out.observables[chain.index].push_back(row);
          out.steps[chain.index].push_back(chain.steps);
        }
        chain.records += o.records_per_segment;
        chain.counters = {chain.steps, chain.steps / 2, chain.steps / 4, chain.steps / 4, 0};
        chain.spans.push_back({name, o.records_per_segment});
        chain.last_checkpoint = utc_now_iso8601();
        writer.set_counters(handle, chain.counters);
      }
      writer.flush();
      if (any) s.files.push_back({name, seg, rank, "localhost"});
    }
    s.checkpoints = seg + 1;
  }
  s.finished = true;
  s.stop_reason = "finished";
  write_run_state(layout, s);
  return out;
}

}  // namespace planmill::test
