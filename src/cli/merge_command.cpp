// planmill merge RUNDIR: checks every plan file of a run and writes RUNDIR/manifest.json
// (docs/manifest.md). Exit status: 0 written and all files intact, 3 written but some records
// are damaged (listed; hot-rung records too), 2 not a readable run folder. It also draws a few
// chains again on the map with its group and vote columns permuted (the blind check,
// run/blind_check.hpp) and records what it found.
#include <filesystem>
#include <iostream>
#include <memory>
#include <string>

#include "cli/commands.hpp"
#include "cli/whole_option.hpp"
#include "planmill/base/error.hpp"
#include "planmill/manifest/manifest.hpp"

namespace planmill::cli {
namespace {

struct MergeOptions {
  std::string run_dir;
  std::string stretches = "3", records = "10";
  bool force_blind_check = false;
};

// One line on what the blind check found.
void say_blind_check(const BlindCheck& b) {
  std::cout << "blind check: " << b.result;
  if (!b.stretches.empty()) {
    std::cout << " (" << b.stretches.size() << " chains drawn again with ";
    for (std::size_t i = 0; i < b.columns.size(); ++i) std::cout << (i ? ", " : "") << b.columns[i];
    std::cout << " permuted; " << b.steps_drawn << " steps)";
  }
  for (const auto& s : b.stretches) {
    if (s.result == "differed") {
      std::cout << ": chain " << s.chain << " differed at step " << *s.differed_at_step;
      break;
    }
  }
  if (!b.why.empty()) std::cout << ": " << b.why;
  std::cout << "\n";
}

int run_merge(const MergeOptions& options) {
  const std::string& run_dir = options.run_dir;
  const BlindCheckOptions blind{
      .stretches = parse_whole_option(options.stretches, "--blind-stretches", 0, 1000, "the chains to draw again"),
      .records = parse_whole_option(options.records, "--blind-records", 1, 1000000, "the records compared per chain"),
      .force = options.force_blind_check};

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
  const BlindCheck blind_check = check_blindness(reader, blind);
  const auto manifest = build_manifest(reader, problems, rung_problems, diagnostics, &blind_check);
  write_manifest(reader.layout(), manifest);

  const auto& totals = manifest["totals"];
  std::cout << "wrote " << reader.layout().manifest().string() << ": " << totals["chains"]
            << " chains, " << totals["records"] << " records, " << totals["plan_files"]
            << " plan files; verdict " << (diagnostics.pass() ? "pass" : "fail")
            << " (planmill diagnose " << run_dir << " for the table)\n";
  say_blind_check(blind_check);
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
  auto o = std::make_shared<MergeOptions>();
  auto* sub =
      app.add_subcommand("merge", "check a run folder's plan files and write its manifest.json");
  sub->add_option("RUNDIR", o->run_dir, "run folder written by 'planmill run'")->required();
  sub->add_option("--blind-stretches", o->stretches,
                  "chains drawn again on the map with group and vote columns permuted (0: none)")
      ->default_str("3");
  sub->add_option("--blind-records", o->records,
                  "records compared per chain drawn again (its first ones)")
      ->default_str("10");
  sub->add_flag("--force-blind-check", o->force_blind_check,
                "draw them again even when a rule reads group columns (to see the check tell)");
  sub->callback([&action, o] { action = [o] { return run_merge(*o); }; });
}

}  // namespace planmill::cli
