#include "cli/commands.hpp"

namespace planmill::cli {

void add_synth_command(CLI::App& app, Action& action) {
  add_pending_command(app, action, "synth", "write the invented demo state (unit table, adjacency)");
}

}  // namespace planmill::cli
