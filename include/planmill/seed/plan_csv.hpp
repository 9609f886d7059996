#pragma once
// Plan files: a header line, then one row per unit "unit id,district" with districts numbered
// 1..k (docs/inputs.md). The header names are free; columns are taken by position.
#include <cstddef>
#include <string>
#include <string_view>
#include <vector>

#include "planmill/graph/unit_graph.hpp"
#include "planmill/plan/plan.hpp"

namespace planmill {

// Every unit of `graph` must appear exactly once and every district 1..k must be used; anything
// else is an InputError naming the file, line and column.
[[nodiscard]] Plan read_plan_csv(const std::string& path, const GraphHandle& graph, std::size_t k);
// The same on text already in memory; `source` names it in errors.
[[nodiscard]] Plan parse_plan_csv(std::string_view text, const std::string& source, const GraphHandle& graph,
                                  std::size_t k);

// The pieces of read_plan_csv, for plans read another way (through a crosswalk, or scored with
// districts outside 1..k): the rows as written, with districts 1..max_district (else InputError);
struct PlanRow {
  std::string id;
  std::size_t district = 0;  // as written, 1..max_district
  std::size_t line = 0;
};
struct PlanRows {
  std::string source, id_column, district_column;
  std::vector<PlanRow> rows;
};
[[nodiscard]] PlanRows read_plan_rows(const std::string& path, std::size_t max_district);
// the district (0-based) of every unit when the ids are the map's own, each unit once (else
// InputError); and the Plan, when every district 1..k has a unit (else InputError).
[[nodiscard]] std::vector<DistrictIndex> unit_districts(const PlanRows& rows, const UnitGraph& graph);
[[nodiscard]] Plan plan_of_every_district(const PlanRows& rows, const GraphHandle& graph, std::size_t k,
                                          std::vector<DistrictIndex> district);

// The plan as CSV text ("unit,district", units in graph order, districts 1..k).
[[nodiscard]] std::string plan_csv_text(const Plan& plan);
// Writes plan_csv_text(plan) with write_file_atomically.
void write_plan_csv(const std::string& path, const Plan& plan);

}  // namespace planmill
