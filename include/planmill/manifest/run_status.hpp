#pragma once
// Where a run stands, for people and for batch scripts (`planmill status RUNDIR`,
// docs/running.md "Run status"): per chain the steps done and planned, records and the last
// checkpoint; whether the run is finished, unfinished (resume it) or damaged (a plan file fails
// its checks, or the committed state cannot be read); who runs it now; the verdict so far.
#include <cstdint>
#include <ctime>
#include <iosfwd>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "planmill/manifest/run_diagnostics.hpp"

namespace planmill {

enum class RunCondition { finished, unfinished, damaged };

// The exit status `planmill status` ends with: 0 finished, 7 unfinished, 8 damaged (2 is left to
// input that is no run folder at all).
[[nodiscard]] int exit_status_of(RunCondition condition) noexcept;
[[nodiscard]] const char* condition_name(RunCondition condition) noexcept;

struct ChainStatus {
  std::uint64_t index = 0;
  std::uint64_t steps = 0, planned_steps = 0, records = 0;
  std::string last_checkpoint;  // UTC, ISO 8601; empty before the first
};

struct RunStatus {
  std::string run_folder;
  RunCondition condition = RunCondition::unfinished;
  std::string why;                // one line: what makes it finished, unfinished or damaged
  std::optional<std::string> running_now;  // the holder of the folder's lock, if a run holds it
  std::string run_id, job_path, stop_reason;
  std::uint64_t checkpoints = 0;
  std::size_t sessions = 0;
  std::string last_checkpoint;           // the latest of the chains'
  std::optional<double> checkpoint_age;  // seconds before `now`
  std::vector<ChainStatus> chains;
  bool files_checked = false;            // false with check_files = false
  std::vector<std::string> problems;     // what the checks found, one line each
  std::optional<RunDiagnostics> verdict;  // the verdict so far, when the chains have records
  std::string verdict_note;               // why there is none, or what stood in the way
};

struct RunStatusOptions {
  bool check_files = true;  // verify every listed plan file (reads them all)
  std::time_t now = 0;      // 0: the clock now
};

// Throws InputError when `run_dir` is not a folder, or is one that holds no run (neither a
// committed state nor a run's job copy). Everything else is reported in the status.
[[nodiscard]] RunStatus run_status(const std::string& run_dir, const RunStatusOptions& options = {});

void print_status(const RunStatus& status, std::ostream& out);
[[nodiscard]] nlohmann::ordered_json status_to_json(const RunStatus& status);

// "2026-12-03T18:00:00Z" as seconds since the epoch; nothing for other text.
[[nodiscard]] std::optional<std::time_t> parse_utc_iso8601(const std::string& text);

}  // namespace planmill
