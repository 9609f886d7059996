// planmill report RUNDIR [--plan PLAN.csv] --out FILE.html [--figures DIR] [--paper a4|letter]:
// one self-contained HTML report of a run (docs/report.md). Exit status: 0 written and the ensemble
// passed its verdict, 3 written but it has not, 2 bad input (nothing written), 5 an output that
// cannot be written.
#include <iostream>
#include <memory>
#include <string>

#include "cli/commands.hpp"
#include "planmill/base/error.hpp"
#include "planmill/report/run_report.hpp"

namespace planmill::cli {
namespace {

struct ReportArgs {
  report::ReportOptions options;
  std::string out, figures, paper = "a4";
};

int run_report(ReportArgs& a) {
  if (a.paper == "a4")
    a.options.paper = report::Paper::a4;
  else if (a.paper == "letter")
    a.options.paper = report::Paper::letter;
  else
    throw InputError({{}, 0, "--paper"}, "'" + a.paper + "' is not a paper size", "give --paper a4 or --paper letter");
  const report::Report r = report::build_report(a.options);
  for (const auto& w : r.warnings) std::cerr << "planmill: warning: " << w << "\n";
  const auto files = report::write_report(r, a.out, a.figures);
  std::cout << "report written to " << a.out << " (" << r.html.size() << " bytes, " << r.figures.size()
            << " figures)\n";
  if (!a.figures.empty()) std::cout << (files.size() - 1) << " figure files written to " << a.figures << "\n";
  if (!r.verdict_pass) std::cout << "note: the ensemble has not passed its convergence verdict (see the report)\n";
  return r.verdict_pass ? 0 : 3;
}

}  // namespace

void add_report_command(CLI::App& app, Action& action) {
  auto args = std::make_shared<ReportArgs>();
  auto* sub = app.add_subcommand("report", "HTML and SVG report of a run");
  sub->add_option("RUNDIR", args->options.run_dir, "run folder written by 'planmill run'")->required();
  sub->add_option("--plan", args->options.plan_file, "a plan CSV on the run's units to compare with the ensemble");
  sub->add_option("--out", args->out, "the HTML file to write")->required();
  sub->add_option("--figures", args->figures, "also write every figure as SVG and CSV into this folder");
  sub->add_option("--paper", args->paper, "page size for printing: a4 (default) or letter");
  sub->callback([&action, args] { action = [args] { return run_report(*args); }; });
}

}  // namespace planmill::cli
