// District tallies as CSV rows, straight from a Plan's own tallies.
#include "planmill/export/district_tallies.hpp"

#include <charconv>
#include <cmath>
#include <set>

#include "planmill/base/error.hpp"
#include "planmill/export/export.hpp"
#include "planmill/io/csv.hpp"

namespace planmill {
namespace {

// Whole sums below 2^53 are exact in a double; they are written as integers ("1000000000000000",
// never "1e+15"), so that readers parse them as whole numbers.
std::string count_text(double value) {
  constexpr double kExactLimit = 9007199254740992.0;  // 2^53
  if (std::isfinite(value) && value == std::trunc(value) && std::fabs(value) < kExactLimit) {
    return std::to_string(static_cast<std::int64_t>(value));
  }
  return csv_number(value);
}

bool perimeters_known(const UnitGraph& g) { return g.has_outer_boundary() && g.has_edge_lengths(); }

}  // namespace

double tally_area(const Plan& plan, DistrictIndex d) {
  return plan.graph().has_areas() ? plan.area(d) : std::nan("");
}
double tally_perimeter(const Plan& plan, DistrictIndex d) {
  return perimeters_known(plan.graph()) ? plan.perimeter(d) : std::nan("");
}

std::string tallies_header(const UnitGraph& graph, const std::string& units_path) {
  std::set<std::string> taken{"chain",      "record", "step",     "district",
                              "population", "area",   "perimeter"};
  std::string header = "chain,record,step,district,population";
  for (std::size_t c = 0; c < graph.count_column_count(); ++c) {
    const std::string& name = graph.count_column_name(c);
    if (!taken.insert(name).second) {
      throw InputError(
          {units_path, 1, name},
          "count column '" + name + "' has the name of another column of the district tallies",
          "rename the column in the unit table and the job to export tallies");
    }
    header += "," + csv_field(name);
  }
  return header + ",area,perimeter\n";
}

void append_tally_rows(std::string& table, std::uint64_t chain, std::uint64_t record,
                       std::uint64_t step, const Plan& plan) {
  const UnitGraph& g = plan.graph();
  const std::string key =
      std::to_string(chain) + ',' + std::to_string(record) + ',' + std::to_string(step) + ',';
  for (std::size_t d = 0; d < plan.district_count(); ++d) {
    const auto district = static_cast<DistrictIndex>(d);
    table += key;
    table += std::to_string(d + 1) + ',' + std::to_string(plan.population(district));
    for (std::size_t c = 0; c < g.count_column_count(); ++c) {
      table += ',';
      table += count_text(plan.count(district, c));
    }
    table += ',';
    table += csv_number(tally_area(plan, district));
    table += ',';
    table += csv_number(tally_perimeter(plan, district));
    table += '\n';
  }
}

}  // namespace planmill
