#pragma once
// A run folder written the way the runner writes one (real ensemble files, a committed
// run-state.json), with made-up plans and observables, for tests of the readers of a run
// (merge, export, diagnose). Plans are random labels, not valid plans: readers must not care.
// With recorded_rungs = R > 1 every chain also records rungs 1..R-1 of a ladder, as the runner
// does with [tempering] record = "all": same files and steps, store index rung_record_index(c, r),
// plans and observables of their own (from a stream apart, so rung 0 is as with R = 1).
//
//   auto run = planmill::test::write_fixture_run(dir, {.chains = 3, .segments = 2});
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <map>
#include <string>
#include <utility>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/run/run_state.hpp"
#include "planmill/store/ensemble.hpp"
#include "planmill/store/hdf5_handle.hpp"

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
  std::uint64_t recorded_rungs = 1;  // 1: the chains only; R: rungs 0..R-1 of every chain
};

// What was written for one recorded sequence (a chain, or one hot rung of its ladder), in order.
struct FixtureRecords {
  std::vector<std::vector<DistrictIndex>> plans;
  std::vector<std::vector<double>> observables;
  std::vector<std::uint64_t> steps;
};

struct FixtureRun {
  RunState state;
  // What was written, to compare readers with: per chain, plans and observable rows in order.
  std::map<std::uint64_t, std::vector<std::vector<DistrictIndex>>> plans;
  std::map<std::uint64_t, std::vector<std::vector<double>>> observables;
  std::map<std::uint64_t, std::vector<std::uint64_t>> steps;
  // Rungs 1..R-1 per chain, keyed {chain, rung}; steps equal the chain's.
  std::map<std::pair<std::uint64_t, std::uint64_t>, FixtureRecords> rungs;
};

namespace fixture_detail {
// Three units relabelled, then a row of observables like the run's (a fraction, a count up to 40,
// a count up to 4, an energy).
inline std::vector<double> next_record(Rng& rng, const FixtureRunOptions& o,
                                       std::vector<DistrictIndex>& plan) {
  for (int flips = 0; flips < 3; ++flips) {
    plan[uniform_below(rng, static_cast<std::uint32_t>(o.units))] =
        static_cast<DistrictIndex>(uniform_below(rng, static_cast<std::uint32_t>(o.districts)));
  }
  return {uniform01(rng), static_cast<double>(uniform_below(rng, 40)),
          static_cast<double>(uniform_below(rng, 4)), uniform01(rng) * 10};
}
}  // namespace fixture_detail

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
  for (std::uint64_t c = 0; c < o.chains; ++c) {
    s.chains.push_back(ChainEntry{.index = c, .recorded_rungs = o.recorded_rungs});
  }
  Rng rng = make_stream(o.seed, 99);
  Rng rung_rng = make_stream(o.seed, 98);
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
        const std::uint64_t first_step = chain.steps;
        for (std::uint64_t r = 0; r < o.records_per_segment; ++r) {
          std::vector<double> row = fixture_detail::next_record(rng, o, plan);
          chain.steps += o.record_every;
          writer.record(handle, chain.steps, plan, row);
          out.plans[chain.index].push_back(plan);
          out.observables[chain.index].push_back(row);
          out.steps[chain.index].push_back(chain.steps);
        }
        for (std::uint64_t rung = 1; rung < o.recorded_rungs; ++rung) {
          FixtureRecords& written = out.rungs[{chain.index, rung}];
          const auto rung_handle =
              writer.add_chain(rung_record_index(chain.index, rung), s.observable_names);
          std::vector<DistrictIndex> rung_plan(o.units);
          if (!written.plans.empty()) rung_plan = written.plans.back();
          std::uint64_t step = first_step;
          for (std::uint64_t r = 0; r < o.records_per_segment; ++r) {
            std::vector<double> row = fixture_detail::next_record(rung_rng, o, rung_plan);
            step += o.record_every;
            writer.record(rung_handle, step, rung_plan, row);
            written.plans.push_back(rung_plan);
            written.observables.push_back(std::move(row));
            written.steps.push_back(step);
          }
        }
        chain.records += o.records_per_segment;
        chain.counters = {chain.steps, chain.steps / 2, chain.steps / 4, chain.steps / 4, 0};
        chain.spans.push_back({name, o.records_per_segment});
        chain.last_checkpoint = utc_now_iso8601();
        writer.set_counters(handle, chain.counters);
      }
      writer.close();
      if (any) s.files.push_back({name, seg, rank, "localhost"});
    }
    s.checkpoints = seg + 1;
  }
  s.finished = true;
  s.stop_reason = "finished";
  write_run_state(layout, s);
  return out;
}

// Flips 4 bytes in the middle of stored chunk `chunk` of dataset `dataset` (e.g. "observables",
// "plan_bytes") of the group of store index `store_index` in `file`, found with H5Dget_chunk_info:
// damage that the file's checksums must catch. Returns false when there is no such chunk.
inline bool damage_chunk(const std::filesystem::path& file, std::uint64_t store_index,
                         const std::string& dataset, hsize_t chunk = 0) {
  haddr_t address = 0;
  hsize_t size = 0;
  {
    silence_hdf5_errors();
    H5File f(H5Fopen(file.c_str(), H5F_ACC_RDONLY, H5P_DEFAULT));
    if (!f.valid()) return false;
    const std::string name = "chain_" + std::to_string(store_index) + "/" + dataset;
    H5Dataset d(H5Dopen2(f.get(), name.c_str(), H5P_DEFAULT));
    if (!d.valid()) return false;
    H5Dataspace space(H5Dget_space(d.get()));
    unsigned mask = 0;
    hsize_t coords[2];
    if (H5Dget_chunk_info(d.get(), space.get(), chunk, coords, &mask, &address, &size) < 0) {
      return false;
    }
  }
  std::fstream out(file, std::ios::in | std::ios::out | std::ios::binary);
  for (hsize_t i = 0; i < 4; ++i) {
    const auto at = static_cast<std::streamoff>(address + size / 2 + i);
    out.seekg(at);
    char c = 0;
    out.get(c);
    out.seekp(at);
    out.put(static_cast<char>(c ^ 0x5A));
  }
  return static_cast<bool>(out);
}

}  // namespace planmill::test
