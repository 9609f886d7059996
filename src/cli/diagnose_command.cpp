#include "cli/commands.hpp"

namespace planmill::cli {

void add_diagnose_command(CLI::App& app, Action& action) {
  add_pending_command(app, action, "diagnose", "convergence diagnostics and a verdict");
}

}  // namespace planmill::cli
