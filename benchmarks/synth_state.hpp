#pragma once
// The benchmark state of the kernel benchmarks (bench_kernels, bench_rule_limits): `synth` with
// 10,000 units and 100 districts (seed 7), and a random seed plan at ±5% (stream (7, 99)).
#include <unistd.h>

#include <filesystem>
#include <string>
#include <utility>

#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/synth/synth.hpp"

namespace planmill::bench {

struct SynthState {
  GraphHandle graph;
  Plan start;
};

inline SynthState make_synth_state(const std::string& tag) {
  const auto dir = std::filesystem::temp_directory_path() / ("planmill_bench_" + tag + "_" + std::to_string(getpid()));
  (void)write_synthetic_state({10000, 100, 7, dir.string()});
  JobSpec job = load_job((dir / "job.toml").string());
  GraphHandle graph = share_graph(load_unit_graph(job.map));
  std::filesystem::remove_all(dir);
  RuleSet rules;
  rules.population_tolerance = 0.05;
  Rng rng = make_stream(7, 99);
  Plan start = random_seed_plan(graph, 100, rules, rng);
  // A fresh plan on the labels, so that its change list starts clean.
  Plan plan(graph, 100, std::vector<DistrictIndex>(start.assignment().begin(), start.assignment().end()));
  return {std::move(graph), std::move(plan)};
}

}  // namespace planmill::bench
