#pragma once
// `planmill run`: the job's chains spread over MPI ranks (chain c on rank c % R; a rank steps its
// chains in turn), plans recorded after burn-in every record_every steps into one ensemble file
// per rank and checkpoint interval (run/run_state.hpp), a checkpoint every checkpoint_seconds and
// on SIGTERM/SIGINT/SIGUSR2 (checkpoint, then stop) or SIGUSR1 (checkpoint, go on), resume from the last
// committed state, progress on rank 0. Recorded plans depend only on the job (seed, chain
// index): never on R, on round sizes, or on where a run was stopped and resumed.
#include <cstdint>
#include <optional>
#include <string>

namespace planmill {

struct RunOptions {
  std::string job_path;
  std::optional<std::string> output_dir;  // overrides [output] dir
  bool resume = false;
  bool progress = true;          // rank 0's progress reports (bar on a terminal, log lines else)
  double progress_seconds = 5.0;
  bool until_converged = false;  // run in blocks of the job's steps until the verdict passes
  std::uint64_t max_steps = 0;   // with until_converged: the most steps per chain (burn-in included)
  bool allow_other_build = false;  // resume even when this build differs from the run's (BuildInfo)
};

enum class RunEnd {
  finished,           // every chain reached its steps
  converged,          // --until-converged: the verdict passed
  budget_spent,       // --until-converged: max_steps reached without a passing verdict
  stopped_on_signal,  // checkpointed on SIGTERM/SIGINT/SIGUSR2; resume to go on
  nothing_to_do,      // --resume of a run that had finished
};

struct RunOutcome {
  RunEnd end = RunEnd::finished;
  std::string run_dir;
  std::uint64_t records = 0;  // recorded plans over all chains, committed
  std::uint64_t steps = 0;    // steps over all chains
  std::string summary;        // one or two lines for the user (rank 0)
};

// Raised on ranks other than the one that found a problem, so that one message is printed.
struct RunFailedElsewhere {
  int exit_status = 2;
};

// Collective over MPI_COMM_WORLD; MPI must be initialised. Throws InputError/InfeasibleError for
// bad input (on the rank that saw it; the others throw RunFailedElsewhere).
[[nodiscard]] RunOutcome run_job(const RunOptions& options);

// SIGTERM, SIGINT, SIGUSR2 -> checkpoint and stop; SIGUSR1 -> checkpoint and go on.
void install_run_signal_handlers();

}  // namespace planmill
