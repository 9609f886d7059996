#include "planmill/seed/plan_csv.hpp"

#include <cmath>
#include <vector>

#include "planmill/io/fields.hpp"
#include "planmill/base/error.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/io/csv.hpp"

namespace planmill {
namespace {

Plan plan_from_table(const CsvTable& table, const GraphHandle& handle, std::size_t k) {
  const UnitGraph& graph = *handle;
  const std::string& source = table.source;
  if (k == 0 || k >= kNoDistrict) {
    throw InputError({source, 0, {}}, "cannot hold a plan of " + std::to_string(k) + " districts",
                     "the number of districts must be 1 to " + std::to_string(kNoDistrict - 1));
  }
  if (table.header.size() != 2) {
    throw InputError({source, 1, {}}, "a plan file has 2 columns (unit id, district), this one has " +
                                      std::to_string(table.header.size()),
                     "write one row per unit: unit id, district number");
  }
  const std::string& id_column = table.header[0];
  const std::string& district_column = table.header[1];
  std::vector<DistrictIndex> district(graph.unit_count(), kNoDistrict);
  std::vector<std::size_t> line_of(graph.unit_count(), 0);
  for (const CsvRow& row : table.rows) {
    const std::string& id = row.fields[0];
    const auto unit = graph.find_unit(id);
    if (!unit) {
      throw InputError({source, row.line, id_column}, "unknown unit id '" + id + "'",
                       "every unit id must be a unit of the map");
    }
    if (line_of[*unit] != 0) {
      throw InputError({source, row.line, id_column},
                       "unit '" + id + "' appears again (first on line " + std::to_string(line_of[*unit]) + ")",
                       "give each unit one district");
    }
    const std::string& text = row.fields[1];
    const io::ParsedNumber number = io::parse_number(text);
    const InputError::Where where{source, row.line, district_column};
    if (number.status != io::NumberStatus::ok || !io::is_whole_decimal(text)) {
      throw InputError(where, "district '" + text + "' is not a whole number",
                       "number districts 1 to " + std::to_string(k));
    }
    if (number.value < 1 || number.value > static_cast<double>(k)) {
      throw InputError(where, "district '" + text + "' is outside 1.." + std::to_string(k),
                       "number districts 1 to " + std::to_string(k) + " (the job's districts.count)");
    }
    district[*unit] = static_cast<DistrictIndex>(number.value - 1);
    line_of[*unit] = row.line;
  }
  std::size_t missing = 0;
  std::string examples;
  for (UnitIndex u = 0; u < graph.unit_count(); ++u) {
    if (district[u] != kNoDistrict) continue;
    if (missing++ < 5) examples += (missing > 1 ? ", '" : "'") + graph.unit_id(u) + "'";
  }
  if (missing > 0) {
    throw InputError({source, 0, id_column},
                     std::to_string(missing) + " unit(s) of the map have no district, for example " + examples,
                     "list every unit of the map once");
  }
  std::vector<std::size_t> used(k, 0);
  for (DistrictIndex d : district) ++used[d];
  for (std::size_t d = 0; d < k; ++d) {
    if (used[d] == 0) {
      throw InputError({source, 0, district_column},
                       "district " + std::to_string(d + 1) + " has no units, but the job asks for " +
                           std::to_string(k) + " districts",
                       "check districts.count in the job file, or number the plan's districts 1.." +
                           std::to_string(k) + " without gaps");
    }
  }
  return Plan(handle, k, std::move(district));
}

}  // namespace

Plan read_plan_csv(const std::string& path, const GraphHandle& graph, std::size_t k) {
  return plan_from_table(read_csv_file(path), graph, k);
}

Plan parse_plan_csv(std::string_view text, const std::string& source, const GraphHandle& graph, std::size_t k) {
  return plan_from_table(parse_csv_text(text, source), graph, k);
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
