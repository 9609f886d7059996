// planmill diagnose: convergence diagnostics per quantity and a verdict, either of a run dir
// (every observable across its chains; the result also goes into RUNDIR/manifest.json) or of a
// long trace CSV (--traces). Exit status: 0 pass, 3 fail, 2 bad input.
#include <filesystem>
#include <iostream>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>

#include "cli/commands.hpp"
#include "planmill/base/error.hpp"
#include "planmill/diagnose/stopping_rule.hpp"
#include "planmill/diagnose/trace_csv.hpp"
#include "planmill/diagnose/verdict.hpp"
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
  double rhat_max = 1.01;
  double ess_min = 400.0;
  std::size_t min_records = diagnose::VerdictRule{}.min_records;
  bool rhat_max_given = false, ess_min_given = false, min_records_given = false;
  std::size_t burn_in = 0;
};

nlohmann::json to_json(const diagnose::StopCheck& stop, const DiagnoseOptions& o) {
  const diagnose::Verdict& verdict = stop.whole;
  auto number = [](double v) {
    return std::isnan(v) ? nlohmann::json(nullptr) : nlohmann::json(v);
  };
  nlohmann::json quantities = nlohmann::json::array();
  for (const auto& q : verdict.table) {
    quantities.push_back({{"name", q.name},
                          {"rhat", number(q.rhat)},
                          {"ess_bulk", number(q.ess_bulk)},
                          {"ess_tail", number(q.ess_tail)},
                          {"mcse_mean", number(q.mcse_mean)},
                          {"note", q.note}});
  }
  nlohmann::json failures = nlohmann::json::array();
  for (const auto& f : verdict.failures) {
    failures.push_back({{"name", f.name}, {"problem", f.problem}, {"suggestion", f.suggestion}});
  }
  return {{"traces", o.traces},
          {"burn_in", o.burn_in},
          {"rhat_max", o.rhat_max},
          {"ess_min", o.ess_min},
          {"min_records", o.min_records},
          {"verdict", stop.pass() ? "pass" : "fail"},
          {"stopping_rule",
           {{"records_per_chain", stop.records},
            {"whole", stop.whole.pass ? "pass" : "fail"},
            {"later_half_first_record", stop.later_first},
            {"later_half", stop.later.pass ? "pass" : "fail"},
            {"failed_part", stop.failed_part()},
            {"summary", stop.summary()}}},
          {"quantities", quantities},
          {"failures", failures}};
}

void check_thresholds(const DiagnoseOptions& o) {
  if (!(o.rhat_max > 1.0)) throw InputError({{}, 0, "--rhat-max"}, "must be greater than 1");
  if (!(o.ess_min >= 0.0)) throw InputError({{}, 0, "--ess-min"}, "must not be negative");
  if (o.min_records < 1) throw InputError({{}, 0, "--min-records"}, "must be at least 1");
}

int diagnose_trace_file(const DiagnoseOptions& o) {
  const diagnose::Traces traces = diagnose::read_traces(o.traces, o.burn_in);
  if (const std::string w = diagnose::single_chain_warning(traces); !w.empty())
    std::cerr << "planmill: warning: " << w << "\n";
  std::vector<diagnose::NamedDraws> quantities;
  for (std::size_t q = 0; q < traces.quantity_names.size(); ++q)
    quantities.push_back({traces.quantity_names[q], traces.matrix(q)});
  const diagnose::VerdictRule rule{o.rhat_max, o.ess_min, o.min_records};
  // The stopping rule (whole record, later half, length), the same function the runner calls.
  const diagnose::StopCheck stop = diagnose::check_stop(quantities, rule);

  std::cout << traces.chain_labels.size() << " chains x " << traces.draws << " draws, "
            << traces.quantity_names.size() << " quantities (burn-in " << o.burn_in << ")\n";
  print_verdict_table(stop.whole, std::cout);
  print_verdict(stop, rule, std::cout);
  if (!o.json.empty()) write_file_atomically(o.json, to_json(stop, o).dump(2) + "\n");
  return stop.pass() ? 0 : 3;
}

int diagnose_run_dir(const DiagnoseOptions& o) {
  if (!std::filesystem::is_directory(o.run_dir)) {
    throw InputError({o.run_dir, 0, {}}, "is not a folder",
                     "give the run dir that 'planmill run' wrote, or --traces FILE.csv");
  }
  const RunReader reader(o.run_dir);
  const auto problems = reader.verify();
  RunVerdictRule rule;
  if (o.rhat_max_given && o.ess_min_given && o.min_records_given) {
    rule = {{o.rhat_max, o.ess_min, o.min_records}, "command line"};
  } else {
    rule = verdict_rule_of_run(reader);
    if (o.rhat_max_given) rule.rule.rhat_max = o.rhat_max;
    if (o.ess_min_given) rule.rule.ess_min = o.ess_min;
    if (o.min_records_given) rule.rule.min_records = o.min_records;
    if (o.rhat_max_given || o.ess_min_given || o.min_records_given)
      rule.source = "command line and " + rule.source;
  }
  RunDiagnostics d = diagnose_run(reader, rule.rule, {.burn_in = o.burn_in, .problems = problems});
  d.rule_source = rule.source;

  std::cout << d.chains.size() << " chains x " << d.draws << " draws, "
            << reader.observable_names().size()
            << " observables (records after the run's burn-in of " << reader.state().burn_in
            << " steps; --burn-in " << o.burn_in << " more records)\n"
            << "thresholds: R-hat < " << d.rule.rhat_max << ", ESS > " << d.rule.ess_min
            << ", at least " << d.rule.min_records << " records per chain ("
            << d.rule_source << ")\n";
  for (const auto& note : d.notes) std::cout << "note: " << note << "\n";
  for (const auto& l : d.left_out)
    std::cout << "left out: chain " << l.chain << ": " << l.why << "\n";
  print_verdict_table(d.verdict, std::cout);
  print_verdict(d.stop, d.rule, std::cout, d.left_out.size());
  for (const auto& chain : reader.state().chains) {
    if (chain.ladder.empty()) continue;
    const LadderReport ladder = describe_ladder(nlohmann::json::parse(chain.ladder));
    std::cout << ladder.line << "\n";
    for (const auto& w : ladder.warnings) std::cout << "warning: " << w << "\n";
  }
  write_manifest_diagnostics(reader, problems, d);
  std::cout << "diagnostics written to " << reader.layout().manifest().string() << "\n";
  if (!o.json.empty()) write_file_atomically(o.json, diagnostics_to_json(d).dump(2) + "\n");
  return d.pass() ? 0 : 3;
}

int run_diagnose(const DiagnoseOptions& o) {
  if (o.traces.empty() && o.run_dir.empty()) {
    throw InputError({{}, 0, {}}, "diagnose needs a run dir or --traces FILE.csv",
                     "e.g. planmill diagnose runs/demo");
  }
  if (!o.traces.empty() && !o.run_dir.empty()) {
    throw InputError({o.run_dir, 0, {}}, "give either a run dir or --traces, not both");
  }
  check_thresholds(o);
  return o.traces.empty() ? diagnose_run_dir(o) : diagnose_trace_file(o);
}

}  // namespace

void add_diagnose_command(CLI::App& app, Action& action) {
  auto options = std::make_shared<DiagnoseOptions>();
  auto* sub =
      app.add_subcommand("diagnose", "convergence diagnostics (R-hat, ESS, MCSE) and a verdict");
  sub->add_option("rundir", options->run_dir, "run dir: every observable across its chains");
  sub->add_option("--traces", options->traces, "long trace CSV: chain,draw,<quantity>...");
  sub->add_option("--json", options->json, "also write the table and verdict as JSON");
  auto* rhat = sub->add_option("--rhat-max", options->rhat_max,
                               "pass only if R-hat < X (default: the job's [verdict], else 1.01)");
  auto* ess = sub->add_option(
      "--ess-min", options->ess_min,
      "pass only if bulk and tail ESS > N (default: the job's [verdict], else 400)");
  auto* min_records = sub->add_option(
      "--min-records", options->min_records,
      "pass only with at least N draws per chain (default: the job's [verdict], else 200)");
  sub->add_option("--burn-in", options->burn_in, "drop the first D draws (records) of every chain");
  sub->callback([&action, options, rhat, ess, min_records] {
    options->rhat_max_given = rhat->count() > 0;
    options->ess_min_given = ess->count() > 0;
    options->min_records_given = min_records->count() > 0;
    action = [options] { return run_diagnose(*options); };
  });
}

}  // namespace planmill::cli
