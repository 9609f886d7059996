#include <mpi.h>
#include <spdlog/spdlog.h>

#include <cstdio>
#include <iostream>
#include <map>

#include "cli/commands.hpp"
#include "cli/whole_option.hpp"
#include "planmill/job/job.hpp"
#include "planmill/base/error.hpp"
#include "planmill/run/runner.hpp"

namespace planmill::cli {
namespace {

// MPI for the length of one run: `planmill run` works alone (one rank) and under mpiexec.
class MpiSession {
 public:
  MpiSession() {
    int provided = 0;
    MPI_Init_thread(nullptr, nullptr, MPI_THREAD_FUNNELED, &provided);
    MPI_Comm_rank(MPI_COMM_WORLD, &rank_);
    MPI_Comm_size(MPI_COMM_WORLD, &size_);
  }
  ~MpiSession() { MPI_Finalize(); }
  MpiSession(const MpiSession&) = delete;
  MpiSession& operator=(const MpiSession&) = delete;
  [[nodiscard]] int rank() const { return rank_; }
  [[nodiscard]] int size() const { return size_; }
  // A failure that the other ranks do not know of: end them all.
  [[noreturn]] void abort(int status) const {
    MPI_Abort(MPI_COMM_WORLD, status);
    std::exit(status);
  }

 private:
  int rank_ = 0, size_ = 1;
};

int exit_status(RunEnd end) {
  switch (end) {
    case RunEnd::finished:
    case RunEnd::converged:
    case RunEnd::nothing_to_do:
      return 0;
    case RunEnd::budget_spent:
      return 3;
    case RunEnd::stopped_on_signal:
      return 4;
  }
  return 1;
}

int run_command(const RunOptions& options, const std::string& log_level, bool quiet) {
  MpiSession mpi;
  const std::string prefix = mpi.size() > 1 ? "planmill[rank " + std::to_string(mpi.rank()) + "]: " : "planmill: ";
  spdlog::set_pattern("[%Y-%m-%d %H:%M:%S] %v");
  spdlog::set_level(quiet ? spdlog::level::warn : spdlog::level::from_str(log_level));
  if (mpi.rank() != 0) spdlog::set_level(spdlog::level::warn);
  install_run_signal_handlers();
  try {
    if (options.until_converged && options.max_steps > 0) {
      // The first block alone runs the job's steps, so a smaller budget could never be kept.
      const JobSpec job = load_job(options.job_path);
      if (options.max_steps < job.sampler.steps)
        throw InputError({"", 0, "--max-steps"},
                         "is " + std::to_string(options.max_steps) + ", below the job's sampler.steps (" +
                             std::to_string(job.sampler.steps) + "), which the first block runs in full",
                         "give --max-steps " + std::to_string(job.sampler.steps) +
                             " or more, or lower sampler.steps in " + options.job_path);
    }
    const RunOutcome out = run_job(options);
    if (mpi.rank() == 0) {
      std::cout << out.summary << "\n";
      std::cout << "plans and run state: " << out.run_dir << "\n";
    }
    return exit_status(out.end);
  } catch (const RunFailedElsewhere& e) {
    return e.exit_status;
  } catch (const InputError& e) {
    std::cerr << prefix << "error: " << e.what() << "\n";
    return 2;
  } catch (const InfeasibleError& e) {
    std::cerr << prefix << "error: " << e.what() << "\n";
    return 2;
  } catch (const OutputError& e) {  // agreed by every rank: each ends cleanly
    std::cerr << prefix << "error: " << e.what() << "\n";
    return 5;
  } catch (const std::exception& e) {
    std::cerr << prefix << "error: " << e.what() << "\n";
    if (mpi.size() > 1) mpi.abort(1);
    return 1;
  }
}

}  // namespace

void add_run_command(CLI::App& app, Action& action) {
  auto* sub = app.add_subcommand(
      "run", "run the chains of a job file (alone, or under mpiexec with chains spread over ranks)");
  struct Args {
    RunOptions options;
    std::string output, max_steps, log_level = "info";
    bool quiet = false;
  };
  auto args = std::make_shared<Args>();
  sub->add_option("job", args->options.job_path, "job file (TOML)")->required();
  sub->add_option("--output", args->output, "run folder (overrides [output] dir)");
  sub->add_flag("--resume", args->options.resume,
                "continue every chain of the run folder from its last checkpoint");
  sub->add_flag("--until-converged", args->options.until_converged,
                "after the job's steps, go on in blocks of the same length until the verdict "
                "passes (needs --max-steps)");
  sub->add_option("--max-steps", args->max_steps,
                  "with --until-converged: at most this many steps per chain (burn-in included)");
  sub->add_flag("--allow-other-build", args->options.allow_other_build,
                "with --resume: go on even when this planmill was built differently from the one "
                "that drew the run (compiler, flags, instruction set, HDF5, MPI)");
  sub->add_flag("--quiet", args->quiet, "no progress reports, only warnings and errors");
  sub->add_option("--log-level", args->log_level, "trace, debug, info, warn, error or off")
      ->check(CLI::IsMember({"trace", "debug", "info", "warn", "error", "off"}));
  sub->add_option("--progress-seconds", args->options.progress_seconds,
                  "seconds between progress reports (default 5)")
      ->check(CLI::PositiveNumber);
  sub->callback([&action, args] {
    action = [args] {
      RunOptions options = args->options;
      if (!args->output.empty()) options.output_dir = args->output;
      if (!args->max_steps.empty())  // an InputError here reaches main(): exit 2
        options.max_steps = parse_whole_option(args->max_steps, "--max-steps", 1, UINT64_MAX,
                                               "the steps per chain (burn-in included)");
      options.progress = !args->quiet;
      return run_command(options, args->log_level, args->quiet);
    };
  });
}

}  // namespace planmill::cli
