#pragma once
// Each subcommand lives in its own src/cli/<name>_command.cpp and registers itself on the app.
// When the user picks it, it stores the work to do in `action`; main() runs it and maps typed
// errors to exit codes (InputError and InfeasibleError -> 2).
#include <CLI/CLI.hpp>
#include <functional>

namespace planmill::cli {

using Action = std::function<int()>;

void add_synth_command(CLI::App& app, Action& action);
void add_check_command(CLI::App& app, Action& action);
void add_selftest_command(CLI::App& app, Action& action);
void add_run_command(CLI::App& app, Action& action);
void add_merge_command(CLI::App& app, Action& action);
void add_export_command(CLI::App& app, Action& action);
void add_diagnose_command(CLI::App& app, Action& action);
void add_compare_command(CLI::App& app, Action& action);
void add_score_command(CLI::App& app, Action& action);
void add_pick_command(CLI::App& app, Action& action);
void add_report_command(CLI::App& app, Action& action);
void add_ingest_command(CLI::App& app, Action& action);
void add_status_command(CLI::App& app, Action& action);
void add_pool_command(CLI::App& app, Action& action);
void add_sweep_command(CLI::App& app, Action& action);

// For subcommands that a later piece of work fills in: "not yet available", exit 2.
void add_pending_command(CLI::App& app, Action& action, const char* name, const char* summary);

}  // namespace planmill::cli
