#include "planmill/seed/plan_csv.hpp"

#include <cmath>
#include <vector>

#include "planmill/io/fields.hpp"
#include "planmill/base/error.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/io/csv.hpp"

namespace planmill {
namespace {

PlanRows rows_of_table(const CsvTable& table, std::size_t max_district) {
  const std::string& source = table.source;
  if (max_district == 0 || max_district >= kNoDistrict) {
    throw InputError({source, 0, {}}, "cannot hold a plan of " + std::to_string(max_district) + " districts",
                     "the number of districts must be 1 to " + std::to_string(kNoDistrict - 1));
  }
  if (table.header.size() != 2) {
    throw InputError({source, 1, {}}, "a plan file has 2 columns (unit id, district), this one has " +
                                      std::to_string(table.header.size()),
                     "write one row per unit: unit id, district number");
  }
  PlanRows out{source, table.header[0], table.header[1], {}};
  out.rows.reserve(table.rows.size());
  const std::string range = std::to_string(max_district);
  for (const CsvRow& row : table.rows) {
    const std::string& text = row.fields[1];
    const io::ParsedNumber number = io::parse_number(text);
    const InputError::Where where{source, row.line, out.district_column};
    if (number.status != io::NumberStatus::ok || !io::is_whole_decimal(text)) {
      throw InputError(where, "district '" + text + "' is not a whole number", "number districts 1 to " + range);
    }
    if (number.value < 1 || number.value > static_cast<double>(max_district)) {
      throw InputError(where, "district '" + text + "' is outside 1.." + range,
                       "number districts 1 to " + range + " (the job's districts.count)");
    }
    out.rows.push_back({row.fields[0], static_cast<std::size_t>(number.value), row.line});
  }
  return out;
}

}  // namespace

PlanRows read_plan_rows(const std::string& path, std::size_t max_district) {
  return rows_of_table(read_csv_file(path), max_district);
}

std::vector<DistrictIndex> unit_districts(const PlanRows& rows, const UnitGraph& graph) {
  std::vector<DistrictIndex> district(graph.unit_count(), kNoDistrict);
  std::vector<std::size_t> line_of(graph.unit_count(), 0);
  for (const PlanRow& row : rows.rows) {
    const auto unit = graph.find_unit(row.id);
    if (!unit) {
      throw InputError({rows.source, row.line, rows.id_column}, "unknown unit id '" + row.id + "'",
                       "every unit id must be a unit of the map");
    }
    if (line_of[*unit] != 0) {
      throw InputError({rows.source, row.line, rows.id_column},
                       "unit '" + row.id + "' appears again (first on line " + std::to_string(line_of[*unit]) + ")",
                       "give each unit one district");
    }
    district[*unit] = static_cast<DistrictIndex>(row.district - 1);
    line_of[*unit] = row.line;
  }
  std::size_t missing = 0;
  std::string examples;
  for (UnitIndex u = 0; u < graph.unit_count(); ++u) {
    if (district[u] != kNoDistrict) continue;
    if (missing++ < 5) examples += (missing > 1 ? ", '" : "'") + graph.unit_id(u) + "'";
  }
  if (missing > 0) {
    throw InputError({rows.source, 0, rows.id_column},
                     std::to_string(missing) + " unit(s) of the map have no district, for example " + examples,
                     "list every unit of the map once");
  }
  return district;
}

Plan plan_of_every_district(const PlanRows& rows, const GraphHandle& graph, std::size_t k,
                            std::vector<DistrictIndex> district) {
  std::vector<std::size_t> used(k, 0);
  for (DistrictIndex d : district) ++used[d];
  for (std::size_t d = 0; d < k; ++d) {
    if (used[d] == 0) {
      throw InputError({rows.source, 0, rows.district_column},
                       "district " + std::to_string(d + 1) + " has no units, but the job asks for " +
                           std::to_string(k) + " districts",
                       "check districts.count in the job file, or number the plan's districts 1.." +
                           std::to_string(k) + " without gaps");
    }
  }
  return Plan(graph, k, std::move(district));
}

Plan read_plan_csv(const std::string& path, const GraphHandle& graph, std::size_t k) {
  const PlanRows rows = read_plan_rows(path, k);
  return plan_of_every_district(rows, graph, k, unit_districts(rows, *graph));
}

Plan parse_plan_csv(std::string_view text, const std::string& source, const GraphHandle& graph, std::size_t k) {
  const PlanRows rows = rows_of_table(parse_csv_text(text, source), k);
  return plan_of_every_district(rows, graph, k, unit_districts(rows, *graph));
}

std::string plan_csv_text(const Plan& plan) {
  std::string out = "unit,district\n";
  const UnitGraph& graph = plan.graph();
  for (UnitIndex u = 0; u < plan.unit_count(); ++u) {
    out += csv_field(graph.unit_id(u));
    out += ',';
    out += std::to_string(static_cast<unsigned>(plan.district_of(u)) + 1);
    out += '\n';
  }
  return out;
}

void write_plan_csv(const std::string& path, const Plan& plan) { write_file_atomically(path, plan_csv_text(plan)); }

}  // namespace planmill
