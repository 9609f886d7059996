#pragma once
// Plan files: a header line, then one row per unit "unit id,district" with districts numbered
// 1..k (docs/inputs.md). The header names are free; columns are taken by position.
#include <cstddef>
#include <string>
#include <string_view>

#include "planmill/graph/unit_graph.hpp"
#include "planmill/plan/plan.hpp"

namespace planmill {

// Every unit of `graph` must appear exactly once and every district 1..k must be used; anything
// else is an InputError naming the file, line and column.
[[nodiscard]] Plan read_plan_csv(const std::string& path, const GraphHandle& graph, std::size_t k);
// The same on text already in memory; `source` names it in errors.
[[nodiscard]] Plan parse_plan_csv(std::string_view text, const std::string& source, const GraphHandle& graph,
                                  std::size_t k);

// The plan as CSV text ("unit,district", units in graph order, districts 1..k).
[[nodiscard]] std::string plan_csv_text(const Plan& plan);
// Writes plan_csv_text(plan) with write_file_atomically.
void write_plan_csv(const std::string& path, const Plan& plan);

}  // namespace planmill
