#pragma once
// The settings of a sweep side by side (docs/sweep.md, "Comparing the settings"): per setting,
// from its run's records (the draws its verdict judges: every chain the verdict diagnosed, the
// records that count), the median and the central 80% band (10th and 90th percentiles, type 7 as
// numpy's default) of seats per election and party, population deviation, compactness, splits
// and every position of the sorted group shares; whether its verdict passed. Text grouped by
// axis, CSV (one row per setting and measure), JSON and one HTML page with a figure per measure.
#include <cstddef>
#include <iosfwd>
#include <nlohmann/json.hpp>
#include <span>
#include <string>
#include <vector>

#include "planmill/sweep/sweep.hpp"

namespace planmill::sweep {

inline constexpr double kBandLow = 0.10, kBandHigh = 0.90;

// Type 7 of Hyndman and Fan (1996): with h = (n - 1) p, x[floor h] + (h - floor h)(x[floor h + 1]
// - x[floor h]) of the sorted values. `sorted` must be sorted; NaN for none.
[[nodiscard]] double quantile_type7(std::span<const double> sorted, double p);

struct MeasureBand {
  std::string name;  // an observable, or "<sorted vector>.position_<i>" (1 = lowest)
  std::size_t draws = 0;  // finite draws over all chains
  double median = 0.0, low = 0.0, high = 0.0;
};

struct SettingSummary {
  SweepSetting setting;
  std::string status;   // "finished", "unfinished", "damaged" or "not run"
  std::string verdict;  // "pass", "fail" or "none" (no records to judge)
  std::string verdict_line;  // the verdict's own line (manifest/run_diagnostics.hpp), or why none
  std::vector<MeasureBand> measures;
};

struct SweepComparison {
  SweepFolder folder;
  std::vector<SettingSummary> settings;
  std::vector<std::string> measures;  // every measure of any setting, in the runs' order
  [[nodiscard]] bool all_finished() const;
  [[nodiscard]] bool all_passed() const;
};

// Reads every setting's run (a setting not run yet is listed as such). Throws InputError when
// `dir` is not a sweep folder.
[[nodiscard]] SweepComparison compare_sweep(const std::string& dir);

// Text: the settings and their verdicts, then per axis (the other axes held at each combination)
// one table of measures against the axis's values, "median [low, high]".
void print_comparison(const SweepComparison& c, std::ostream& out);
[[nodiscard]] std::string comparison_csv(const SweepComparison& c);
[[nodiscard]] nlohmann::ordered_json comparison_json(const SweepComparison& c);
// One self-contained HTML page (the report part's writer).
[[nodiscard]] std::string comparison_html(const SweepComparison& c);

}  // namespace planmill::sweep
