#pragma once
// The ε-outlier test's part of compare's outputs (report.cpp calls these; layout: docs/compare.md,
// "The ε-outlier test").
#include <iosfwd>
#include <nlohmann/json.hpp>
#include <string>

#include "planmill/compare/outlier_test.hpp"

namespace planmill::compare {

void print_outlier_section(const OutlierSection& section, std::ostream& out);
[[nodiscard]] nlohmann::ordered_json outlier_json(const OutlierSection& section);
// The columns the test adds to compare's CSV, their empty cells for the other rows, its own rows
// (kind "outlier" per chain, "outlier_combined" per measure), and its status as a comment line.
[[nodiscard]] const std::string& outlier_csv_columns();   // ",tail,chain,..."
[[nodiscard]] const std::string& outlier_csv_blank();     // ",,,..." as many cells
[[nodiscard]] std::string outlier_csv_status(const OutlierSection& section);  // "# ...\n"
// Rows "kind,measure,,plan" + `empty_after_plan` empty cells + the added columns.
[[nodiscard]] std::string outlier_csv_rows(const OutlierSection& section, std::size_t empty_after_plan);

}  // namespace planmill::compare
