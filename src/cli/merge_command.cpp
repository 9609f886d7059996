#include "cli/commands.hpp"

namespace planmill::cli {

void add_merge_command(CLI::App& app, Action& action) {
  add_pending_command(app, action, "merge", "index a run dir and write manifest.json");
}

}  // namespace planmill::cli
