// planmill merge RUNDIR: checks every plan file of a run and writes RUNDIR/manifest.json
// (docs/manifest.md). Exit status: 0 written and all files intact, 3 written but some records
// are damaged (listed; hot-rung records too), 2 not a readable run folder.
#include <filesystem>
#include <iostream>
#include <memory>
#include <string>

#include "cli/commands.hpp"
#include "planmill/base/error.hpp"
#include "planmill/manifest/manifest.hpp"

namespace planmill::cli {
namespace {

int run_merge(const std::string& run_dir) {
  if (!std::filesystem::is_directory(run_dir)) {
    throw InputError({run_dir, 0, {}}, "is not a folder",
                     "give the run folder that 'planmill run' wrote");
  }
  const RunReader reader(run_dir);
  const auto problems = reader.verify();
  const RunVerdictRule rule = verdict_rule_of_run(reader);
  RunDiagnostics diagnostics = diagnose_run(reader, rule.rule, {.problems = problems, .judge = rule.judge});
  diagnostics.rule_source = rule.source;
  const auto rung_problems = reader.verify_rungs();  // hot rungs: never part of the verdict
  const auto manifest = build_manifest(reader, problems, rung_problems, diagnostics);
  write_manifest(reader.layout(), manifest);

  const auto& totals = manifest["totals"];
  std::cout << "wrote " << reader.layout().manifest().string() << ": " << totals["chains"]
            << " chains, " << totals["records"] << " records, " << totals["plan_files"]
            << " plan files; verdict " << (diagnostics.pass() ? "pass" : "fail")
            << " (planmill diagnose " << run_dir << " for the table)\n";
  if (totals["inputs_not_matching"].get<std::size_t>() > 0) {
    std::cout << "note: " << totals["inputs_not_matching"]
              << " input file(s) differ from the run's start or are missing (see \"inputs\")\n";
  }
  for (const auto& p : manifest["problems"]) {
    std::cerr << "planmill: damaged: chain " << p["chain"] << ", records " << p["first_record"]
              << ".." << (p["last_record"].is_null() ? std::string("end") : p["last_record"].dump())
              << ": " << p["what"].get<std::string>() << "\n";
  }
  for (const auto& p : manifest["rung_problems"]) {
    std::cerr << "planmill: damaged: chain " << p["chain"] << " rung "
              << (p["rung"].is_null() ? std::string("?") : p["rung"].dump()) << ", records "
              << p["first_record"] << ".."
              << (p["last_record"].is_null() ? std::string("end") : p["last_record"].dump()) << ": "
              << p["what"].get<std::string>() << " (the ensemble is not affected)\n";
  }
  return problems.empty() && rung_problems.empty() ? 0 : 3;
}

}  // namespace

void add_merge_command(CLI::App& app, Action& action) {
  auto run_dir = std::make_shared<std::string>();
  auto* sub =
      app.add_subcommand("merge", "check a run folder's plan files and write its manifest.json");
  sub->add_option("RUNDIR", *run_dir, "run folder written by 'planmill run'")->required();
  sub->callback([&action, run_dir] { action = [run_dir] { return run_merge(*run_dir); }; });
}

}  // namespace planmill::cli
