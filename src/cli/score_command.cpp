// planmill score JOB PLAN.csv: one plan against the job's rules and measures, no ensemble needed
// (docs/score.md). Exit status: 0 the plan meets every hard rule, 6 it breaks one (the report
// says which and by how much), 2 bad input (nothing written), 5 an output could not be written.
#include <iostream>
#include <memory>
#include <string>

#include "cli/commands.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/job/loaded_job.hpp"
#include "planmill/score/score.hpp"

namespace planmill::cli {
namespace {

constexpr int kBreaksARule = 6;

struct ScoreArgs {
  std::string job, plan, crosswalk, json;
};

int run_score(const ScoreArgs& a) {
  const LoadedJob loaded = load_and_check_job(a.job);
  for (const auto& warning : loaded.report.warnings) std::cerr << "planmill: warning: " << warning << "\n";
  const score::ScoreReport report = score::score_plan(loaded, a.plan, a.crosswalk);
  score::print_score(report, std::cout);
  if (!a.json.empty()) {
    write_file_atomically(a.json, score::score_json(report).dump(2) + "\n");
    std::cout << "score written to " << a.json << "\n";
  }
  return report.meets_every_rule() ? 0 : kBreaksARule;
}

}  // namespace

void add_score_command(CLI::App& app, Action& action) {
  auto args = std::make_shared<ScoreArgs>();
  auto* sub = app.add_subcommand("score", "check one plan against a job's rules and measure it, without an ensemble");
  sub->add_option("JOB", args->job, "job file (TOML): the map, the rules and the [measures]")->required();
  sub->add_option("PLAN", args->plan, "plan CSV (unit,district), or on fine units with --crosswalk")->required();
  sub->add_option("--crosswalk", args->crosswalk,
                  "PLAN is on finer units: carry it onto the map's units through this CSV (fine_unit,unit,population)");
  sub->add_option("--json", args->json, "also write the score as JSON");
  sub->callback([&action, args] { action = [args] { return run_score(*args); }; });
}

}  // namespace planmill::cli
