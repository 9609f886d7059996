#include <cstdio>
#include <iostream>
#include <map>

#include "cli/commands.hpp"
#include "cli/run_session.hpp"
#include "cli/whole_option.hpp"
#include "planmill/job/job.hpp"
#include "planmill/base/error.hpp"
#include "planmill/run/runner.hpp"

namespace planmill::cli {
namespace {

int run_command(const RunOptions& options, const std::string& log_level, bool quiet) {
  MpiSession mpi;
  start_run_logging(mpi, log_level, quiet);
  return guarded_run(mpi, [&] {
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
  });
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
