#include "cli/commands.hpp"

namespace planmill::cli {

void add_compare_command(CLI::App& app, Action& action) {
  add_pending_command(app, action, "compare", "place a plan within an ensemble");
}

}  // namespace planmill::cli
