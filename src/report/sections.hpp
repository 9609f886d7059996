#pragma once
// The pieces of the report (private to the part): the facts of a run gathered once, then one
// function per section. Files: run_report.cpp (gathering, writing), run_section.cpp (cautions, what
// was run), mixing_section.cpp (verdict, traces, ladders), plan_section.cpp (comparison, maps).
#include <map>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "planmill/compare/report.hpp"
#include "planmill/job/job.hpp"
#include "planmill/manifest/run_diagnostics.hpp"
#include "planmill/report/html.hpp"
#include "planmill/report/run_report.hpp"
#include "planmill/run/run_reader.hpp"

namespace planmill::report {

struct RunFacts {
  const RunReader* reader = nullptr;
  std::string run_dir;
  JobSpec job;
  RunVerdictRule rule;
  RunDiagnostics diagnostics;
  std::optional<nlohmann::json> manifest;  // RUNDIR/manifest.json when it exists and parses
  std::string manifest_problem;            // why there is none
  std::optional<nlohmann::json> measures;  // the run state's measures_json
  // The draws that count (as the verdict takes them), per observable, per chain.
  std::map<std::string, std::vector<std::vector<double>>> draws;
  std::optional<compare::CompareReport> comparison;
};

[[nodiscard]] Section cautions_section(const RunFacts& facts);
[[nodiscard]] Section run_section(const RunFacts& facts);
[[nodiscard]] Section mixing_section(const RunFacts& facts, const ReportOptions& options, std::vector<Figure>& figures);
// Empty id when the run has no ladder.
[[nodiscard]] Section ladder_section(const RunFacts& facts);
[[nodiscard]] Section plan_section(const RunFacts& facts, std::vector<Figure>& figures);
// A geometry that cannot be read leaves the maps out, with why, in the section and in `warnings`.
[[nodiscard]] Section maps_section(const RunFacts& facts, std::vector<Figure>& figures,
                                   std::vector<std::string>& warnings);

// The figure inline with its file names when --figures writes it.
[[nodiscard]] std::string figure_html(const Figure& f);

}  // namespace planmill::report
