#pragma once
// Demonstration plans: the records of a run's ensemble that best meet stated aims, in
// lexicographic order ("most districts above a group share, then fewest split counties"), among
// the records that pass the filters (compare/record_filter.hpp), each with its place in the
// filtered ensemble's distribution of every stored observable (compare::compare_scalar).
// Layout of the output folder and the rules of the ranking: docs/pick.md.
#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "planmill/compare/comparison.hpp"
#include "planmill/compare/record_filter.hpp"

namespace planmill::pick {

enum class Direction { most, fewest };

struct Aim {
  std::string text;  // as given
  Direction direction = Direction::most;
  std::string name;  // a stored observable
};

// "most:NAME" or "fewest:NAME"; InputError (key --aim) otherwise.
[[nodiscard]] Aim parse_aim(std::string_view text);

struct PickOptions {
  std::string run_dir, out_dir;
  std::vector<Aim> aims;  // at least one
  std::vector<compare::RecordFilter> filters;
  std::size_t count = 1;            // distinct plans to pick
  std::size_t dropped_records = 0;  // leading records dropped per chain, beyond the job's burn-in
  bool force = false;               // replace an existing, non-empty out_dir
};

struct Pick {
  std::uint64_t chain = 0, record = 0, step = 0;
  std::vector<double> values;                       // every stored observable, in the run's order
  std::vector<compare::ScalarComparison> places;    // the same order, against the filtered ensemble
  std::string plan_csv;                             // unit,district text
};

struct PickResult {
  std::string run_dir;
  std::vector<std::string> aims;
  std::vector<std::string> chains;  // the chains used (the verdict's)
  std::size_t records_per_chain = 0;
  bool verdict_pass = false;
  std::string verdict_line;
  std::vector<compare::FilterCount> filters;
  std::string filter_line;
  std::size_t candidates = 0;        // kept records ranked
  std::size_t duplicates_skipped = 0;  // ranked above a later pick but holding a plan already picked
  std::vector<std::string> observables;
  std::vector<Pick> picks;           // best first
};

// Throws InputError (exit 2) for a folder that is no run, an aim or filter naming an observable
// the run does not store (listing those it stores), or filters that keep no record.
[[nodiscard]] PickResult pick_plans(const PickOptions& options);

[[nodiscard]] std::string picks_table_csv(const PickResult& result);
[[nodiscard]] std::string picks_summary(const PickResult& result);
// InputError when out_dir exists and is not empty, unless options.force.
void check_out_dir(const PickOptions& options);
// Writes plan-<i>.csv per pick, picks.csv and summary.txt into options.out_dir, all or nothing.
// InputError when out_dir exists and is not empty, unless options.force (then it is replaced).
void write_picks(const PickResult& result, const PickOptions& options);

}  // namespace planmill::pick
