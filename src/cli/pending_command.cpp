#include <iostream>

#include "cli/commands.hpp"

namespace planmill::cli {

void add_pending_command(CLI::App& app, Action& action, const char* name, const char* summary) {
  auto* sub = app.add_subcommand(name, std::string(summary) + " (not yet available)");
  sub->allow_extras();
  sub->callback([&action, name = std::string(name)] {
    action = [name] {
      std::cerr << "planmill: error: '" << name << "' is not yet available in this version\n";
      return 2;
    };
  });
}

}  // namespace planmill::cli
