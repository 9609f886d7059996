#include "cli/commands.hpp"

namespace planmill::cli {

void add_run_command(CLI::App& app, Action& action) {
  add_pending_command(app, action, "run", "run the chains of a job file");
}

}  // namespace planmill::cli
