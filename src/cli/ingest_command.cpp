#include "cli/commands.hpp"

namespace planmill::cli {

void add_ingest_command(CLI::App& app, Action& action) {
  add_pending_command(app, action, "ingest", "build a unit table and adjacency from a map file");
}

}  // namespace planmill::cli
