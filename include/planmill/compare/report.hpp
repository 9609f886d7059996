#pragma once
// A comparison of one plan with a run's ensemble as shown and written: the terminal text, the
// JSON and the CSV of `planmill compare` (layouts: docs/compare.md). Every output carries
// caution(); the summary speaks only of the measures declared before the comparison ([compare]
// declared in the job) and of the overall statistics of the sorted-position vectors.
#include <cstddef>
#include <iosfwd>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "planmill/compare/comparison.hpp"
#include "planmill/compare/outlier_test.hpp"
#include "planmill/compare/record_filter.hpp"

namespace planmill::compare {

struct CompareReport {
  std::string run_dir, plan_file;
  std::string plan_reading;  // how a plan on finer units was carried onto the map's (empty: read as given)
  std::vector<std::string> chains;     // chains used, after the verdict left out damaged ones
  std::vector<std::size_t> records;    // their record counts
  std::uint64_t burn_in_steps = 0;     // the job's steps before the first record
  std::size_t dropped_records = 0;     // further leading records dropped per chain
  std::size_t draws = 0;               // records used per chain (after the filters)
  std::vector<FilterCount> filters;    // --keep, in order, with the records each removed
  std::string filter_line;             // compare::describe_filters
  bool verdict_pass = false;
  std::string verdict_line;            // the verdict as `planmill diagnose` words it
  std::vector<std::string> warnings;
  // Said when the run's population band is much looser than the plan's own balance
  // (band_note), also among the warnings and first in the summary; empty otherwise.
  std::string population_band;
  std::vector<std::string> not_stored;  // the plan's measures that the run has not recorded
  std::vector<std::string> declared;    // [compare] declared, in the job's order
  std::vector<ScalarComparison> scalars;
  std::vector<VectorComparison> vectors;
  OutlierSection outlier;  // the ε-outlier test, or one line on why it was not run
};

[[nodiscard]] const std::string& caution();

// One sentence per declared measure (or why it cannot be given), then one per vector's overall
// statistic.
[[nodiscard]] std::vector<std::string> summary(const CompareReport& report);
// When the plan's largest population deviation is at most half the run's tolerance (or its
// overall range at most half the range the run allows), a sentence saying so plainly; else "".
[[nodiscard]] std::string band_note(double plan_deviation, double plan_range, double tolerance,
                                    double range_allowed);

void print_report(const CompareReport& report, std::ostream& out);

// How compare's and pick's text write numbers: "NA" for NaN, else printf's %.*g, or a
// percentage with two decimals.
[[nodiscard]] std::string number_text(double v, int digits = 4);
[[nodiscard]] std::string percent_text(double share);
[[nodiscard]] nlohmann::ordered_json report_json(const CompareReport& report);
[[nodiscard]] std::string report_csv(const CompareReport& report);
// {"applied": [{"filter", "removed"}], "text"}: the filters as every JSON output names them.
[[nodiscard]] nlohmann::ordered_json filters_json(const std::vector<FilterCount>& filters, const std::string& line);

}  // namespace planmill::compare
