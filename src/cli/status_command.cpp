// planmill status RUNDIR: where a run stands (docs/running.md "Run status"). Exit status: 0
// finished, 7 unfinished (resume it), 8 damaged, 2 no run folder; --json prints the same as JSON.
#include <iostream>
#include <memory>
#include <string>

#include "cli/commands.hpp"
#include "planmill/manifest/run_status.hpp"

namespace planmill::cli {
namespace {

struct StatusArgs {
  std::string run_dir;
  bool json = false, skip_checks = false;
};

int run_status_command(const StatusArgs& a) {
  RunStatusOptions options;
  options.check_files = !a.skip_checks;
  const RunStatus status = run_status(a.run_dir, options);
  if (a.json) std::cout << status_to_json(status).dump(2) << "\n";
  else print_status(status, std::cout);
  return exit_status_of(status.condition);
}

}  // namespace

void add_status_command(CLI::App& app, Action& action) {
  auto args = std::make_shared<StatusArgs>();
  auto* sub = app.add_subcommand(
      "status", "where a run stands: steps, records, last checkpoint, finished or not, verdict so far");
  sub->add_option("RUNDIR", args->run_dir, "run folder written by 'planmill run'")->required();
  sub->add_flag("--json", args->json, "print the status as JSON instead of text");
  sub->add_flag("--skip-checks", args->skip_checks,
                "do not read the plan files (faster; cannot tell a damaged run)");
  sub->footer("Exit status: 0 finished, 7 unfinished (resume it), 8 damaged, 2 not a run folder.");
  sub->callback([&action, args] { action = [args] { return run_status_command(*args); }; });
}

}  // namespace planmill::cli
