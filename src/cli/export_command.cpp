#include "cli/commands.hpp"

namespace planmill::cli {

void add_export_command(CLI::App& app, Action& action) {
  add_pending_command(app, action, "export", "write chosen plans and observables as CSV");
}

}  // namespace planmill::cli
