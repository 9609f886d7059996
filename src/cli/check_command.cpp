#include "cli/commands.hpp"

namespace planmill::cli {

void add_check_command(CLI::App& app, Action& action) {
  add_pending_command(app, action, "check", "load and validate everything a job file names");
}

}  // namespace planmill::cli
