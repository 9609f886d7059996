#pragma once
// The report's figures, each built from numbers already computed (no files read here): the SVG
// it shows and the CSV of exactly the numbers it draws (`planmill report --figures DIR` writes
// both). Colours come from one palette (docs/report.md says why these): lines of different chains
// also differ by dash pattern, so they stay apart in greyscale print.
#include <array>
#include <cstddef>
#include <cstdint>
#include <span>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "planmill/compare/comparison.hpp"

namespace planmill::report {

struct Figure {
  std::string slug;     // file name stem, e.g. "trace-compactness.cut_edges"
  std::string title;
  std::string caption;  // what is drawn, in words (HTML-escaped by the assembler)
  std::string svg;
  std::string csv;
};

// Chains: dark blue, orange-red, teal green, purple, ochre, sky blue, then again with other dashes.
[[nodiscard]] std::string_view chain_colour(std::size_t chain);
[[nodiscard]] std::string_view chain_dash(std::size_t chain);
// Map fills: light tints, districts labelled by number (fills alone repeat past the palette).
[[nodiscard]] std::string_view district_fill(std::size_t district);
inline constexpr std::string_view kPlanMark = "#000000";   // the compared plan, everywhere
inline constexpr std::string_view kEnsembleBox = "#9fb8d6";  // the ensemble's central 50%

// One observable's draws per chain (chains[c][d]); at most `max_points` points per chain are
// drawn, every m-th draw with m = ceil(draws / max_points); the caption says m.
[[nodiscard]] Figure trace_figure(std::string_view observable, std::span<const std::string> chain_labels,
                                  std::span<const std::vector<double>> chains, std::size_t max_points);

// Autocorrelation of each chain at lags 0..max_lag (acov[t] / acov[0], diagnose::autocovariance).
[[nodiscard]] Figure autocorrelation_figure(std::string_view observable, std::span<const std::string> chain_labels,
                                            std::span<const std::vector<double>> chains, std::size_t max_lag);

// The ordered-district chart of one sorted-position vector: per position the ensemble's 2.5, 25,
// 50, 75 and 97.5 percentiles as a whisker, box and median, and the plan's value marked (filled
// when outside the central 95%).
[[nodiscard]] Figure ordered_district_figure(const compare::VectorComparison& vector);

// Histogram of one scalar measure's finite draws, with the plan's value and its share below marked.
// Whole-number draws with few distinct values get one bar per value.
[[nodiscard]] Figure histogram_figure(const compare::ScalarComparison& comparison, std::span<const double> draws);

// The file name stem of a figure: `prefix` and `name`, with anything but letters, digits, '.', '-'
// and '_' as '_'.
[[nodiscard]] std::string figure_slug(std::string_view prefix, std::string_view name);

// CSV cell for a number (empty for NaN) and for text (quoted when it must be).
[[nodiscard]] std::string csv_number(double v);
[[nodiscard]] std::string csv_text(std::string_view text);

}  // namespace planmill::report
