// planmill diagnose: convergence diagnostics per observable and a verdict, either of a run folder
// (every observable across its chains; the result also goes into RUNDIR/manifest.json) or of a
// long trace CSV (--traces). Both go through diagnose::assess_convergence() and print and write
// the same table and JSON. Exit status: 0 pass, 3 fail, 2 bad input.
#include <cstdio>
#include <filesystem>
#include <iostream>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>

#include "cli/commands.hpp"
#include "cli/whole_option.hpp"
#include "planmill/base/error.hpp"
#include "planmill/diagnose/convergence.hpp"
#include "planmill/diagnose/trace_csv.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/manifest/manifest.hpp"
#include "planmill/manifest/run_diagnostics.hpp"
#include "planmill/temper/ladder_summary.hpp"

namespace planmill::cli {
namespace {

struct DiagnoseOptions {
  std::string traces;
  std::string run_dir;
  std::string json;
  double rhat_max = 0.0, ess_min = 0.0;
  std::string min_records, drop_records;  // whole numbers, read by parse_whole_option
  std::string old_burn_in;                // the former --burn-in, now only an error
  bool rhat_max_given = false, ess_min_given = false;
};

// Which thresholds the command line gives.
struct Given {
  bool any = false, all = false;
};

Given thresholds_given(const DiagnoseOptions& o) {
  const bool min_records = !o.min_records.empty();
  return {o.rhat_max_given || o.ess_min_given || min_records,
          o.rhat_max_given && o.ess_min_given && min_records};
}

// `base` with every threshold the command line gives put over it.
diagnose::VerdictRule with_options(diagnose::VerdictRule base, const DiagnoseOptions& o) {
  if (o.rhat_max_given) {
    if (!(o.rhat_max > 1.0)) throw InputError({{}, 0, "--rhat-max"}, "must be greater than 1");
    base.rhat_max = o.rhat_max;
  }
  if (o.ess_min_given) {
    if (!(o.ess_min >= 0.0)) throw InputError({{}, 0, "--ess-min"}, "must not be negative");
    base.ess_min = o.ess_min;
  }
  if (!o.min_records.empty()) {
    base.min_records = parse_whole_option(o.min_records, "--min-records", 1, UINT64_MAX,
                                          "the records every chain needs before a verdict counts");
  }
  return base;
}

std::string text(double v) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%g", v);
  return buffer;
}

std::size_t dropped_records(const DiagnoseOptions& o) {
  return o.drop_records.empty() ? 0
                                : parse_whole_option(o.drop_records, "--drop-records", 0, UINT64_MAX,
                                                     "the leading records to drop from every chain");
}

// What both forms print after their first line, and the JSON they both write.
int report(const RunDiagnostics& d, const DiagnoseOptions& o) {
  std::cout << "thresholds: R-hat < " << d.rule.rhat_max << ", ESS > " << d.rule.ess_min
            << ", at least " << d.rule.min_records << " records per chain (" << d.rule_source << ")\n";
  for (const auto& note : d.notes) std::cout << "note: " << note << "\n";
  for (const auto& l : d.left_out) std::cout << "left out: chain " << l.chain << ": " << l.why << "\n";
  print_verdict_table(d.verdict(), std::cout);
  print_verdict(d, std::cout);
  if (!o.json.empty()) write_file_atomically(o.json, diagnostics_to_json(d).dump(2) + "\n");
  return d.pass() ? 0 : 3;
}

int diagnose_trace_file(const DiagnoseOptions& o) {
  const Given given = thresholds_given(o);
  const diagnose::VerdictRule rule = with_options({}, o);
  diagnose::RecordedDraws traces = diagnose::read_traces(o.traces);
  traces.dropped_records = dropped_records(o);
  if (const std::string w = diagnose::single_chain_warning(traces); !w.empty())
    std::cerr << "planmill: warning: " << w << "\n";
  RunDiagnostics d = diagnose::assess_convergence(traces, rule);
  d.rule_source = given.all ? "command line" : given.any ? "command line and defaults" : "defaults";
  std::cout << d.chains.size() << " chains x " << d.draws << " draws, " << traces.observables.size()
            << " observables (" << d.dropped_records << " leading records dropped per chain)\n";
  return report(d, o);
}

int diagnose_run_dir(const DiagnoseOptions& o) {
  if (!std::filesystem::is_directory(o.run_dir)) {
    throw InputError({o.run_dir, 0, {}}, "is not a folder",
                     "give the run folder that 'planmill run' wrote, or --traces FILE.csv");
  }
  const RunReader reader(o.run_dir);
  const auto problems = reader.verify();
  const Given given = thresholds_given(o);
  // With every threshold given, the job's [verdict] is not read (it may be what is broken).
  RunVerdictRule rule = given.all ? RunVerdictRule{{}, "command line", std::nullopt} : verdict_rule_of_run(reader);
  if (given.any && !given.all) rule.source = "command line and " + rule.source;
  rule.rule = with_options(rule.rule, o);
  RunDiagnostics d =
      diagnose_run(reader, rule.rule, {.dropped_records = dropped_records(o), .problems = problems, .judge = rule.judge});
  d.rule_source = rule.source;

  std::cout << d.chains.size() << " chains x " << d.draws << " draws, "
            << reader.observable_names().size()
            << " observables (records after the run's burn-in of " << reader.state().burn_in
            << " steps; " << d.dropped_records << " more leading records dropped per chain)\n";
  const int status = report(d, o);
  for (const auto& chain : reader.state().chains) {
    if (chain.ladder.empty()) continue;
    const LadderReport ladder = describe_ladder(nlohmann::json::parse(chain.ladder));
    std::cout << ladder.line << "\n";
    for (const auto& w : ladder.warnings) std::cout << "warning: " << w << "\n";
  }
  write_manifest_diagnostics(reader, problems, d);
  std::cout << "diagnostics written to " << reader.layout().manifest().string() << "\n";
  return status;
}

int run_diagnose(const DiagnoseOptions& o) {
  if (o.traces.empty() && o.run_dir.empty()) {
    throw InputError({{}, 0, {}}, "diagnose needs a run folder or --traces FILE.csv",
                     "e.g. planmill diagnose runs/demo");
  }
  if (!o.old_burn_in.empty()) {
    throw InputError({{}, 0, "--burn-in"}, "is now --drop-records",
                     "give --drop-records " + o.old_burn_in +
                         ": it counts records; burn-in means the job's steps before the first record");
  }
  if (!o.traces.empty() && !o.run_dir.empty()) {
    throw InputError({o.run_dir, 0, {}}, "give either a run folder or --traces, not both");
  }
  return o.traces.empty() ? diagnose_run_dir(o) : diagnose_trace_file(o);
}

}  // namespace

void add_diagnose_command(CLI::App& app, Action& action) {
  auto options = std::make_shared<DiagnoseOptions>();
  const diagnose::VerdictRule defaults;
  auto* sub = app.add_subcommand("diagnose",
                                 "convergence diagnostics (R-hat, ESS, MCSE) per observable and a verdict");
  sub->add_option("RUNDIR", options->run_dir, "run folder: every observable across its chains");
  sub->add_option("--traces", options->traces, "long trace CSV: chain,draw,<observable>...");
  sub->add_option("--json", options->json, "also write the table and verdict as JSON");
  auto* rhat = sub->add_option("--rhat-max", options->rhat_max,
                               "pass only if R-hat < X (default: the job's [verdict], else " +
                                   text(defaults.rhat_max) + ")");
  auto* ess = sub->add_option("--ess-min", options->ess_min,
                              "pass only if bulk and tail ESS > N (default: the job's [verdict], else " +
                                  text(defaults.ess_min) + ")");
  sub->add_option("--min-records", options->min_records,
                  "pass only with at least N records per chain (default: the job's [verdict], else " +
                      std::to_string(defaults.min_records) + ")");
  sub->add_option("--drop-records", options->drop_records,
                  "drop the first N records (rows) of every chain; counts records, not steps: a "
                  "run's records already start after its job's burn_in steps (default 0)");
  sub->add_option("--burn-in", options->old_burn_in)->group("");  // hidden: says what replaced it
  sub->callback([&action, options, rhat, ess] {
    options->rhat_max_given = rhat->count() > 0;
    options->ess_min_given = ess->count() > 0;
    action = [options] { return run_diagnose(*options); };
  });
}

}  // namespace planmill::cli
