#include "planmill/graph/feasibility.hpp"

#include <cmath>
#include <sstream>

#include "planmill/base/error.hpp"

namespace planmill {
namespace {
std::string show(double x) {
  std::ostringstream out;
  out.precision(10);
  out << x;
  return out.str();
}
}  // namespace

void check_feasible(const UnitGraph& graph, std::size_t districts, double eps, const std::string& job_path) {
  const InputError::Where count_key{job_path, 0, "districts.count"};
  const InputError::Where tolerance_key{job_path, 0, "rules.population_tolerance"};
  const std::size_t n = graph.unit_count();
  if (districts == 0) throw InputError(count_key, "must be at least 1", "ask for one or more districts");
  if (districts > n) {
    throw InputError(count_key,
                     "asks for " + std::to_string(districts) + " districts but the map has only " +
                         std::to_string(n) + " units",
                     "ask for fewer districts, or use a map with smaller units");
  }
  if (!(eps >= 0.0) || !std::isfinite(eps))
    throw InputError(tolerance_key, "must be a finite number of 0 or more", "for example 0.05 for ±5%");
  const std::int64_t total = graph.total_population();
  if (total == 0) {
    throw InputError({job_path, 0, "map.population"}, "every unit has population 0",
                     "check that the job names the right population column");
  }
  const double ideal = static_cast<double>(total) / static_cast<double>(districts);
  // Whole-number bounds on a district's population; the small slack absorbs rounding in eps * ideal.
  const double slack = 1e-9 * ideal;
  const double upper = std::floor((1.0 + eps) * ideal + slack);
  const double lower = std::max(0.0, std::ceil((1.0 - eps) * ideal - slack));
  const std::string bounds =
      "each district needs between " + show(lower) + " and " + show(upper) + " people (ideal " + show(ideal) + ")";
  if (lower > upper) {
    throw InputError(tolerance_key, "no whole population fits: " + bounds,
                     "allow a larger tolerance or change the number of districts");
  }
  UnitIndex largest = 0;
  std::size_t populated = 0;
  for (UnitIndex u = 0; u < n; ++u) {
    if (graph.population(u) > graph.population(largest)) largest = u;
    if (graph.population(u) > 0) ++populated;
  }
  const auto largest_population = static_cast<double>(graph.population(largest));
  if (largest_population > upper) {
    throw InputError(tolerance_key,
                     "unit '" + graph.unit_id(largest) + "' alone has " + show(largest_population) +
                         " people, more than any district may hold: " + bounds,
                     "allow a larger tolerance, ask for fewer districts, or split the unit into smaller "
                     "units in the map");
  }
  if (lower > 0 && populated < districts) {
    throw InputError(count_key,
                     "only " + std::to_string(populated) + " units have people, fewer than the " +
                         std::to_string(districts) + " districts that each need some",
                     "ask for fewer districts");
  }
  // k districts hold between k*lower and k*upper people; that range must contain the total.
  const double k = static_cast<double>(districts);
  if (k * upper < static_cast<double>(total) || k * lower > static_cast<double>(total)) {
    throw InputError(tolerance_key, "the total of " + std::to_string(total) + " cannot be shared out: " + bounds,
                     "allow a larger tolerance or change the number of districts");
  }
}

}  // namespace planmill
