#pragma once
// `planmill report`: one self-contained HTML file about a run folder (docs/report.md), made of
// what was run (job, map, provenance from the manifest, planmill's version), what the chains show
// about mixing (diagnose::assess_convergence through diagnose_run: the verdict, its table, traces
// and autocorrelation of the judged observables; a tempered run's ladders), with a plan the
// comparison of compare::compare_plan_with_run (ordered-district charts, histograms, summary),
// maps when the job names a geometry, and the cautions. Figures keep their numbers, so each can be
// written as an SVG file with a CSV beside it. The HTML holds summaries and thinned traces only,
// never every draw.
#include <cstddef>
#include <string>
#include <vector>

#include "planmill/report/figures.hpp"
#include "planmill/report/html.hpp"

namespace planmill::report {

struct ReportOptions {
  std::string run_dir;
  std::string plan_file;  // empty: no comparison
  Paper paper = Paper::a4;
  std::size_t trace_points = 400;  // at most this many points per chain in a trace
  std::size_t max_lag = 60;        // autocorrelation lags shown
};

struct Report {
  std::string html;
  std::vector<Figure> figures;
  bool verdict_pass = false;
  std::vector<std::string> section_ids;
  std::vector<std::string> warnings;  // what the report had to leave out, e.g. maps without geometry
};

// Throws InputError (exit 2) for a folder that is no run, a run without its job copy, or a plan that
// does not fit the run's map. A geometry file that cannot be read leaves out the maps only (a
// warning, and the maps section says why).
[[nodiscard]] Report build_report(const ReportOptions& options);

// Writes the HTML to `out` atomically, and with a `figures_dir` every figure as <slug>.svg and
// <slug>.csv there (written beside, then moved into place, so a failure leaves old files). Returns
// the files written. Throws OutputError when a file cannot be written.
std::vector<std::string> write_report(const Report& report, const std::string& out, const std::string& figures_dir);

}  // namespace planmill::report
