#include "cli/commands.hpp"

namespace planmill::cli {

void add_report_command(CLI::App& app, Action& action) {
  add_pending_command(app, action, "report", "HTML and SVG report of a run");
}

}  // namespace planmill::cli
