#include "cli/commands.hpp"

namespace planmill::cli {

void add_selftest_command(CLI::App& app, Action& action) {
  add_pending_command(app, action, "selftest", "check every kernel against exact enumeration on small graphs");
}

}  // namespace planmill::cli
