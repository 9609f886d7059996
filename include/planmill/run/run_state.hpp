#pragma once
// The run folder and its committed state.
//
//   RUNDIR/job.toml            the job file text as given (written at the first start)
//   RUNDIR/run-state.json      what has been committed: every chain's snapshot, record counts and
//                              the plan files that hold its records. Replaced atomically at each
//                              checkpoint; a reader or a resume trusts nothing that it does not list.
//   RUNDIR/plans/seg-SSSSS-rank-RRR.h5
//                              ensemble files (docs/format.md). Rank R writes one per checkpoint
//                              interval S and closes it at the checkpoint, so a file once listed is
//                              never written again; a killed rank can only lose its unlisted file.
//   RUNDIR/manifest.json       written by `planmill merge` (docs/manifest.md)
#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "planmill/run/build_info.hpp"
#include "planmill/store/ensemble.hpp"

namespace planmill {

inline constexpr std::int64_t kRunStateFormatVersion = 1;

struct RunLayout {
  std::filesystem::path root;
  [[nodiscard]] std::filesystem::path job_copy() const { return root / "job.toml"; }
  [[nodiscard]] std::filesystem::path state_file() const { return root / "run-state.json"; }
  [[nodiscard]] std::filesystem::path plans_dir() const { return root / "plans"; }
  [[nodiscard]] std::filesystem::path manifest() const { return root / "manifest.json"; }
  // Relative to root, as stored in the state.
  [[nodiscard]] static std::string plan_file_name(std::uint64_t segment, int rank);
  [[nodiscard]] std::filesystem::path resolve(const std::string& relative) const {
    return root / relative;
  }
};

// One span of a chain's records inside one plan file, in record order.
struct ChainFileSpan {
  std::string file;  // relative to the run folder
  std::uint64_t records = 0;
};

// With [tempering] record = "all", the hotter rungs of ladder c are recorded too, at the target
// rung's steps and into the same files (chain c's spans): rung r under the store's chain index
// rung_record_index(c, r). Rung 0 is chain c itself. Rungs number at most 64 (job/job.cpp).
inline constexpr std::uint64_t kRungRecordBase = std::uint64_t{1} << 40;
inline constexpr std::uint64_t kMaxRungs = 64;
[[nodiscard]] constexpr std::uint64_t rung_record_index(std::uint64_t chain, std::uint64_t rung) {
  return rung == 0 ? chain : kRungRecordBase + chain * kMaxRungs + rung;
}
[[nodiscard]] constexpr bool is_rung_record_index(std::uint64_t store_index) {
  return store_index >= kRungRecordBase;
}

struct ChainEntry {
  std::uint64_t index = 0;
  std::uint64_t steps = 0;    // steps taken so far
  std::uint64_t records = 0;  // recorded plans so far (sum of the spans)
  StoredCounters counters;
  std::string snapshot;              // Chain::save() or Ladder::save() at the last checkpoint
  std::string ladder;                // with tempering: ladder_summary() as JSON text; else empty
  std::string last_checkpoint;       // UTC, ISO 8601
  std::vector<ChainFileSpan> spans;  // where its records are
  std::uint64_t recorded_rungs = 1;  // 1: the chain (a ladder's target rung); R: every rung
  // The chain's index inside its plan files when that is not `index`: in a pool of runs
  // (manifest/pool.hpp) chains are numbered anew and keep, in their files, the index their own
  // run gave them.
  std::optional<std::uint64_t> stored_as;
  [[nodiscard]] std::uint64_t index_in_files() const { return stored_as.value_or(index); }
};

struct PlanFileEntry {
  std::string file;  // relative to the run folder
  std::uint64_t segment = 0;
  int rank = 0;
  std::string host;
  // SHA-256 of the file as committed (closed and flushed before the checkpoint that lists it):
  // a file put in its place, even a valid plan file of the same rank, does not match. Empty in
  // run states written before planmill recorded it; such files are checked by their own checksums
  // only.
  std::string sha256;
};

// One start or resume of the run.
struct RunSession {
  std::string started, ended;  // UTC, ISO 8601; ended empty while running or after a kill
  int ranks = 1;
  std::vector<std::string> hosts;  // per rank
  std::string how_ended;           // "finished", "checkpointed on signal", "converged", ...
};

// An input is known by its content (SHA-256) and by the path the job names, relative to the job
// file's folder, so a run folder moved or copied together with its inputs finds them again from
// the job file given at resume, and a changed file is refused wherever the folder is. Run states
// written before planmill did so hold absolute paths; those are used as they are.
struct InputFileEntry {
  std::string role;  // "job", "units", "adjacency", "start plan"
  std::string path;  // relative to the job file's folder (absolute in old run states)
  std::string sha256;
};

// `path` (a file the job names) as stored in the state: relative to the folder of `job_file`
// when it can be, else absolute.
[[nodiscard]] std::string input_path_for_state(const std::string& job_file, const std::string& path);
// A stored input path as a file to open: an absolute one as it is, a relative one from the folder
// of `job_file`.
[[nodiscard]] std::string resolve_input_path(const std::string& job_file, const std::string& stored);

struct RunState {
  std::int64_t format_version = kRunStateFormatVersion;
  std::string run_id;
  std::string planmill_version, git_commit;
  std::string job_path;  // absolute, as given on the command line of the latest start or resume
  std::string job_sha256;
  std::vector<InputFileEntry> inputs;
  // Every build that drew this run's plans, in order: the one that started it, then any that a
  // resume with --allow-other-build went on with. Empty in run states from before planmill
  // recorded it.
  std::vector<BuildInfo> builds;
  std::uint64_t seed = 0;
  std::uint64_t target_steps = 0;  // steps per chain the run aims at (burn-in included)
  std::uint64_t burn_in = 0;
  std::uint64_t record_every = 1;
  std::vector<std::string> observable_names;
  std::vector<std::string> sorted_names;  // the measures' sorted vectors, district_count values each
  // What the run measures, resolved for its map (a JSON object as text, measures_json() in
  // run/observables.hpp; the manifest lists it); empty in run states from before it was kept.
  std::string measures_json;
  std::uint64_t checkpoints = 0;  // commits so far; the next plan files use segment = checkpoints
  bool finished = false;
  std::string stop_reason;  // why the last session stopped, once it has
  std::vector<RunSession> sessions;
  std::vector<ChainEntry> chains;  // ascending by index
  std::vector<PlanFileEntry> files;
  // A pool of runs (`planmill pool`): readable as one run, never run or resumed; its plan files
  // are the pieces' own, named relative to the pool's folder.
  bool pooled = false;
};

// Throws InputError naming the file (and the key) when it is missing or malformed.
[[nodiscard]] RunState read_run_state(const RunLayout& layout);
// Atomic replace (io/atomic_file.hpp).
void write_run_state(const RunLayout& layout, const RunState& state);

// The same JSON as text, e.g. to send a state (or the part of it one rank knows) between ranks.
[[nodiscard]] std::string encode_run_state(const RunState& state);
// Throws std::invalid_argument on malformed text.
[[nodiscard]] RunState decode_run_state(std::string_view text);

[[nodiscard]] std::string utc_now_iso8601();

}  // namespace planmill
