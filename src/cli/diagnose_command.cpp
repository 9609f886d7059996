// planmill diagnose --traces FILE.csv: convergence diagnostics per quantity and a verdict.
// Exit status: 0 pass, 3 fail, 2 bad input.
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <nlohmann/json.hpp>
#include <string>
#include <unistd.h>

#include "cli/commands.hpp"
#include "planmill/base/error.hpp"
#include "planmill/diagnose/trace_csv.hpp"
#include "planmill/diagnose/verdict.hpp"
#include "planmill/io/atomic_file.hpp"

namespace planmill::cli {
namespace {

struct DiagnoseOptions {
  std::string traces;
  std::string run_dir;
  std::string json;
  double rhat_max = 1.01;
  double ess_min = 400.0;
  std::size_t burn_in = 0;
};

std::string cell(double v, const char* format) {
  if (std::isnan(v)) return "NaN";
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, format, v);
  return buffer;
}

void print_table(const diagnose::Verdict& verdict, std::ostream& out) {
  std::vector<std::vector<std::string>> rows{
      {"quantity", "rhat", "ess_bulk", "ess_tail", "mcse_mean", "mean", "sd", "note"}};
  for (const auto& q : verdict.table) {
    rows.push_back({q.name, cell(q.rhat, "%.4f"), cell(q.ess_bulk, "%.0f"), cell(q.ess_tail, "%.0f"),
                    cell(q.mcse_mean, "%.3g"), cell(q.mean, "%.6g"), cell(q.sd, "%.4g"), q.note});
  }
  std::vector<std::size_t> width(rows[0].size(), 0);
  for (const auto& r : rows) {
    for (std::size_t i = 0; i < r.size(); ++i) width[i] = std::max(width[i], r[i].size());
  }
  for (const auto& r : rows) {
    std::string line;
    for (std::size_t i = 0; i < r.size(); ++i) {
      const std::size_t pad = width[i] - r[i].size();
      if (i == 0 || i + 1 == r.size()) {
        line += r[i] + std::string(i + 1 == r.size() ? 0 : pad, ' ');  // text left-aligned
      } else {
        line += std::string(pad, ' ') + r[i];  // numbers right-aligned
      }
      if (i + 1 < r.size()) line += "  ";
    }
    while (!line.empty() && line.back() == ' ') line.pop_back();
    out << line << "\n";
  }
}

nlohmann::json to_json(const diagnose::Verdict& verdict, const DiagnoseOptions& o) {
  auto number = [](double v) { return std::isnan(v) ? nlohmann::json(nullptr) : nlohmann::json(v); };
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

// Write to a temporary file beside the target, then rename: readers never see half a file.
int run_diagnose(const DiagnoseOptions& o) {
  if (o.traces.empty()) {
    if (!o.run_dir.empty()) {
      std::cerr << "planmill: error: 'diagnose RUNDIR' is not yet available in this version; "
                   "use --traces FILE.csv\n";
    } else {
      std::cerr << "planmill: error: diagnose needs --traces FILE.csv\n";
    }
    return 2;
  }
  if (!o.run_dir.empty()) {
    throw InputError({o.run_dir, 0, {}}, "give either a run dir or --traces, not both");
  }
  if (!(o.rhat_max > 1.0)) throw InputError({{}, 0, "--rhat-max"}, "must be greater than 1");
  if (!(o.ess_min >= 0.0)) throw InputError({{}, 0, "--ess-min"}, "must not be negative");

  const diagnose::Traces traces = diagnose::read_traces(o.traces, o.burn_in);
  std::vector<diagnose::QuantityDiagnostics> table;
  table.reserve(traces.quantity_names.size());
  for (std::size_t q = 0; q < traces.quantity_names.size(); ++q) {
    table.push_back(diagnose::diagnose_quantity(traces.quantity_names[q], traces.matrix(q)));
  }
  const auto verdict = diagnose::judge(std::move(table), {o.rhat_max, o.ess_min});

  std::cout << traces.chain_labels.size() << " chains x " << traces.draws << " draws, "
            << traces.quantity_names.size() << " quantities (burn-in " << o.burn_in << ")\n";
  print_table(verdict, std::cout);
  if (verdict.pass) {
    std::cout << "verdict: pass (R-hat < " << o.rhat_max << ", bulk and tail ESS > " << o.ess_min
              << " for every quantity)\n";
  } else {
    std::cout << "verdict: fail (" << verdict.failures.size() << " of " << verdict.table.size()
              << " quantities)\n";
    for (const auto& f : verdict.failures) {
      std::cout << "  " << f.name << ": " << f.problem << "\n    -> " << f.suggestion << "\n";
    }
  }
  if (!o.json.empty()) write_file_atomically(o.json, to_json(verdict, o).dump(2) + "\n");
  return verdict.pass ? 0 : 3;
}

}  // namespace

void add_diagnose_command(CLI::App& app, Action& action) {
  auto options = std::make_shared<DiagnoseOptions>();
  auto* sub = app.add_subcommand("diagnose", "convergence diagnostics (R-hat, ESS, MCSE) and a verdict");
  sub->add_option("rundir", options->run_dir, "run dir (not yet available; use --traces)");
  sub->add_option("--traces", options->traces, "long trace CSV: chain,draw,<quantity>...");
  sub->add_option("--json", options->json, "also write the table and verdict as JSON");
  sub->add_option("--rhat-max", options->rhat_max, "pass only if R-hat < X (default 1.01)");
  sub->add_option("--ess-min", options->ess_min, "pass only if bulk and tail ESS > N (default 400)");
  sub->add_option("--burn-in", options->burn_in, "drop the first D draws of every chain");
  sub->callback([&action, options] { action = [options] { return run_diagnose(*options); }; });
}

}  // namespace planmill::cli
