#pragma once
// What the text and the HTML page of a sweep comparison share (private to src/sweep): the blocks
// of settings along one axis with the other axes held, and the measures shown in them.
#include <string>
#include <vector>

#include "planmill/sweep/sweep_compare.hpp"

namespace planmill::sweep::blocks {

// The settings along axis `axis`, one per value in the file's order, the other axes held at `held`.
struct AxisBlock {
  std::size_t axis = 0;
  std::string held;  // "rules.county_splits_max = none, ..." or empty when there are no others
  std::vector<const SettingSummary*> columns;
};
// Every axis with two or more values (or the one setting, when no axis has two); for each, one
// block per combination of the other axes' values.
[[nodiscard]] std::vector<AxisBlock> axis_blocks(const SweepComparison& c);

// The measures a table shows: every scalar, and of each sorted vector the lowest, middle and two
// highest positions (`all_positions` keeps every position).
[[nodiscard]] std::vector<std::string> shown_measures(const SweepComparison& c, bool all_positions);

[[nodiscard]] const MeasureBand* find(const SettingSummary& s, const std::string& name);
// "median [low, high]", or "-" for a measure the setting lacks.
[[nodiscard]] std::string cell(const MeasureBand* m);

}  // namespace planmill::sweep::blocks
