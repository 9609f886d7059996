// planmill command line: a thin layer over planmill_core.
#include <cstdio>
#include <exception>
#include <iostream>

#include "cli/commands.hpp"
#include "planmill/base/error.hpp"
#include "planmill/version.hpp"

int main(int argc, char** argv) {
  using namespace planmill;
  CLI::App app{"planmill: large, verifiably mixed ensembles of districting plans"};
  app.name("planmill");
  app.require_subcommand(0, 1);
  app.set_version_flag("--version", std::string("planmill ") + kVersion + " (" + kGitCommit + ")");
  cli::Action action;
  cli::add_synth_command(app, action);
  cli::add_check_command(app, action);
  cli::add_selftest_command(app, action);
  cli::add_run_command(app, action);
  cli::add_merge_command(app, action);
  cli::add_export_command(app, action);
  cli::add_diagnose_command(app, action);
  cli::add_compare_command(app, action);
  cli::add_score_command(app, action);
  cli::add_pick_command(app, action);
  cli::add_report_command(app, action);
  cli::add_ingest_command(app, action);
  cli::add_status_command(app, action);
  cli::add_pool_command(app, action);
  cli::add_sweep_command(app, action);
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    const int code = app.exit(e);
    return code == 0 ? 0 : 2;
  }
  if (!action) {
    std::cout << app.help();
    return 2;
  }
  try {
    return action();
  } catch (const InputError& e) {
    std::cerr << "planmill: error: " << e.what() << "\n";
    return 2;
  } catch (const InfeasibleError& e) {
    std::cerr << "planmill: error: " << e.what() << "\n";
    return 2;
  } catch (const OutputError& e) {
    std::cerr << "planmill: error: " << e.what() << "\n";
    return 5;
  } catch (const std::exception& e) {
    std::cerr << "planmill: internal error: " << e.what() << "\n";
    return 1;
  }
}
