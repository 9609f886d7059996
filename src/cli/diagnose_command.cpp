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
  bool rhat_max_given = false, ess_min_given = false;
  std::size_t burn_in = 0;
};

nlohmann::json to_json(const diagnose::Verdict& verdict, const DiagnoseOptions& o) {
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
          {"verdict", verdict.pass ? "pass" : "fail"},
          {"quantities", quantities},
          {"failures", failures}};
}

void check_thresholds(const DiagnoseOptions& o) {
  if (!(o.rhat_max > 1.0)) throw InputError({{}, 0, "--rhat-max"}, "must be greater than 1");
  if (!(o.ess_min >= 0.0)) throw InputError({{}, 0, "--ess-min"}, "must not be negative");
}

int diagnose_trace_file(const DiagnoseOptions& o) {
  const diagnose::Traces traces = diagnose::read_traces(o.traces, o.burn_in);
  if (const std::string w = diagnose::single_chain_warning(traces); !w.empty())
    std::cerr << "planmill: warning: " << w << "\n";
  std::vector<diagnose::QuantityDiagnostics> table;
  table.reserve(traces.quantity_names.size());
  for (std::size_t q = 0; q < traces.quantity_names.size(); ++q) {
    table.push_back(diagnose::diagnose_quantity(traces.quantity_names[q], traces.matrix(q)));
  }
  const diagnose::VerdictRule rule{o.rhat_max, o.ess_min};
  const auto verdict = diagnose::judge(std::move(table), rule);

  std::cout << traces.chain_labels.size() << " chains x " << traces.draws << " draws, "
            << traces.quantity_names.size() << " quantities (burn-in " << o.burn_in << ")\n";
  print_verdict_table(verdict, std::cout);
  print_verdict(verdict, rule, std::cout);
  if (!o.json.empty()) write_file_atomically(o.json, to_json(verdict, o).dump(2) + "\n");
  return verdict.pass ? 0 : 3;
}

int diagnose_run_dir(const DiagnoseOptions& o) {
  if (!std::filesystem::is_directory(o.run_dir)) {
    throw InputError({o.run_dir, 0, {}}, "is not a folder",
                     "give the run dir that 'planmill run' wrote, or --traces FILE.csv");
  }
  const RunReader reader(o.run_dir);
  const auto problems = reader.verify();
  RunVerdictRule rule;
  if (o.rhat_max_given && o.ess_min_given) {
    rule = {{o.rhat_max, o.ess_min}, "command line"};
  } else {
    rule = verdict_rule_of_run(reader);
    if (o.rhat_max_given) rule.rule.rhat_max = o.rhat_max;
    if (o.ess_min_given) rule.rule.ess_min = o.ess_min;
    if (o.rhat_max_given || o.ess_min_given) rule.source = "command line and " + rule.source;
  }
  RunDiagnostics d = diagnose_run(reader, rule.rule, {.burn_in = o.burn_in, .problems = problems});
  d.rule_source = rule.source;

  std::cout << d.chains.size() << " chains x " << d.draws << " draws, "
            << reader.observable_names().size()
            << " observables (records after the run's burn-in of " << reader.state().burn_in
            << " steps; --burn-in " << o.burn_in << " more records)\n"
            << "thresholds: R-hat < " << d.rule.rhat_max << ", ESS > " << d.rule.ess_min << " ("
            << d.rule_source << ")\n";
  for (const auto& note : d.notes) std::cout << "note: " << note << "\n";
  for (const auto& l : d.left_out)
    std::cout << "left out: chain " << l.chain << ": " << l.why << "\n";
  print_verdict_table(d.verdict, std::cout);
  print_verdict(d.verdict, d.rule, std::cout, d.left_out.size());
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
  sub->add_option("--burn-in", options->burn_in, "drop the first D draws (records) of every chain");
  sub->callback([&action, options, rhat, ess] {
    options->rhat_max_given = rhat->count() > 0;
    options->ess_min_given = ess->count() > 0;
    action = [options] { return run_diagnose(*options); };
  });
}

}  // namespace planmill::cli
