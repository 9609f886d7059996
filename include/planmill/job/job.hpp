#pragma once
// The job file (TOML, docs/jobs.md): everything a run needs, read once and checked strictly.
// Unknown keys, wrong types and out-of-range values are InputErrors naming the key and its line.
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "planmill/diagnose/verdict_rule.hpp"
#include "planmill/graph/map_spec.hpp"
#include "planmill/moves/kernel_kind.hpp"

namespace planmill {

struct GroupShareSpec {
  std::string group;       // a name listed in map.groups
  double threshold = 0.5;  // share of district population
  double weight = 0.0;     // energy falls by weight for each district at or above threshold
  std::int64_t at_least = -1, at_most = -1;  // hard: districts at or above threshold; -1 = none
};

struct RulesSpec {
  double population_tolerance = 0.05;
  double population_range_max = -1.0;   // overall range over the ideal; -1 = no limit
  std::int64_t county_splits_max = -1;  // -1 = no limit (every count limit below too)
  // county_splits_max = "fewest": split only as needed, the fewest splits a search finds first
  bool county_splits_fewest = false;
  std::int64_t fewest_splits_attempts = 100;
  std::int64_t county_pieces_max = -1, county_districts_max = -1;
  std::int64_t municipality_splits_max = -1, municipality_pieces_max = -1, municipality_districts_max = -1;
  double cut_edges_weight = 0.0;
  double county_splits_weight = 0.0;
  std::vector<GroupShareSpec> group_share;
};

struct SamplerSpec {
  KernelKind kernel = KernelKind::recombination;
  std::size_t chains = 4;
  std::uint64_t steps = 1000;
  std::uint64_t burn_in = 0;
  std::uint64_t record_every = 1;
  std::uint64_t seed = 1;
  double gamma = 0.0;  // merge-split target exponent on spanning-tree counts
  double beta = 1.0;   // inverse temperature on the energy
  std::size_t balanced_cut_bound = 0;  // merge-split M; 0 = |U| - 1 (always exact)
  // Weight of a spanning-tree edge inside one county / one municipality (1 = none; tree kernels).
  double tree_weight_county = 1.0;
  double tree_weight_municipality = 1.0;
};

// [tempering] (docs/tempering.md): each chain of the run becomes a ladder of replicas at inverse
// temperatures b_0 = sampler.beta > ... > b_{R-1}. Either `betas` is listed (betas[0] must equal
// sampler.beta), or rungs and hottest_beta give a geometric ladder.
enum class TemperingRecord { target, all };

struct TemperingSpec {
  bool enabled = false;            // the section is present
  std::size_t rungs = 0;           // replicas per ladder (= betas.size() when betas is listed)
  double hottest_beta = 0.0;       // geometric ladder's hottest rung (0 < hottest < target)
  std::vector<double> betas;       // listed ladder, target first, strictly decreasing; else empty
  std::uint64_t swap_every = 10;   // steps between swap rounds
  bool tune = false;               // adapt inner rungs during burn-in, then freeze
  TemperingRecord record = TemperingRecord::target;  // record the target rung, or every rung
};

// [measures] (docs/jobs.md): what every recorded plan is measured by (measures/measures.hpp). A
// list left out takes its default; names were checked against [map] when the file was read.
struct GroupMeasuresSpec {
  std::string group;                      // listed in map.groups
  std::string denominator;                // listed in map.groups; empty: total population
  std::vector<double> thresholds = {0.5};  // districts strictly above each
};

struct MeasuresSpec {
  std::optional<std::vector<std::string>> elections;      // default: every two-party election
  std::optional<std::vector<GroupMeasuresSpec>> groups;  // default: every group, share of population above 0.5
  double competitive_low = 0.45, competitive_high = 0.55;
  std::optional<bool> county_splits, municipality_splits;  // default: when the map has the codes
};

struct OutputSpec {
  std::string dir;  // resolved relative to the job file
  double checkpoint_seconds = 300.0;
};

// Where each chain starts when the job gives a start plan (docs/jobs.md, "Starting plans").
enum class ChainStarts {
  mixed,   // chain 0 from the given plan, every other chain from its own random seed plan
  given,   // every chain from the given plan: R-hat cannot see chains that all stay near it
  random,  // every chain from its own random seed plan
};

// [compare] (docs/compare.md): the measures a comparison's summary speaks of, named before any plan
// is compared, so that the summary cannot be chosen after seeing the results.
struct CompareSpec {
  std::vector<std::string> declared;  // observable names; empty: the summary gives only the overall statistics
};

struct JobSpec {
  std::string path;  // the job file as given
  std::string text;  // its full text, stored with every run
  MapSpec map;
  std::size_t districts = 0;
  std::string start = "random";  // or a resolved plan CSV path
  ChainStarts starts = ChainStarts::mixed;  // with a start plan; without one, every chain is random
  std::vector<std::size_t> frozen;  // districts.frozen: start-plan districts (1..k) kept as given
  RulesSpec rules;
  SamplerSpec sampler;
  TemperingSpec tempering;
  MeasuresSpec measures;
  OutputSpec output;
  diagnose::VerdictRule verdict;  // the [verdict] section (defaults: diagnose/verdict_rule.hpp)
  CompareSpec compare;            // the [compare] section
  // verdict.judge: the observables the verdict judges (checked against the run's names when it
  // starts, see run/judged_draws.hpp); unset: all of them.
  std::optional<std::vector<std::string>> verdict_judge;
  std::size_t verdict_judge_line = 0;
};

// Parses job text; relative paths are resolved against the folder of `source`.
[[nodiscard]] JobSpec parse_job_text(std::string_view text, const std::string& source);
// Reads and parses a job file.
[[nodiscard]] JobSpec load_job(const std::string& path);

}  // namespace planmill
