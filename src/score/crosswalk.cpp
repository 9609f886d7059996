#include "planmill/score/crosswalk.hpp"

#include <algorithm>
#include <tuple>

#include "planmill/base/error.hpp"
#include "planmill/io/csv.hpp"
#include "planmill/io/fields.hpp"

namespace planmill::score {
namespace {

constexpr const char* kFineColumn = "fine_unit";
constexpr const char* kUnitColumn = "unit";
constexpr const char* kPopulationColumn = "population";

std::size_t required_column(const CsvTable& table, const char* name) {
  const std::size_t c = table.column_index(name);
  if (c == static_cast<std::size_t>(-1) || c >= table.header.size())
    throw InputError({table.source, 1, name}, std::string("the crosswalk has no column '") + name + "' (columns are " +
                                                  table.header_list() + ")",
                     "name the columns fine_unit, unit, population (docs/score.md)");
  return c;
}

}  // namespace

Crosswalk read_crosswalk(const std::string& path, const UnitGraph& graph) {
  const CsvTable table = read_csv_file(path);
  const std::size_t fine_c = required_column(table, kFineColumn), unit_c = required_column(table, kUnitColumn),
                    pop_c = required_column(table, kPopulationColumn);
  const double largest = io::largest_exact_count(std::max<std::size_t>(table.rows.size(), graph.unit_count()));
  Crosswalk w;
  w.source = path;
  const std::size_t n = table.rows.size();
  w.fine_id.reserve(n);
  w.unit.reserve(n);
  w.population.reserve(n);
  w.line.reserve(n);
  w.index.reserve(n);
  std::vector<std::int64_t> sum(graph.unit_count(), 0);
  std::vector<std::size_t> fine_count(graph.unit_count(), 0);
  for (const CsvRow& row : table.rows) {
    const std::string& id = row.fields[fine_c];
    if (id.empty())
      throw InputError({path, row.line, kFineColumn}, "empty fine unit id", "give every fine unit an id");
    const auto [at, fresh] = w.index.emplace(id, w.fine_id.size());
    if (!fresh)
      throw InputError({path, row.line, kFineColumn},
                       "fine unit '" + id + "' appears again (first on line " + std::to_string(w.line[at->second]) + ")",
                       "list each fine unit once");
    const auto unit = graph.find_unit(row.fields[unit_c]);
    if (!unit)
      throw InputError({path, row.line, kUnitColumn}, "unknown unit '" + row.fields[unit_c] + "'",
                       "every fine unit must lie in a unit of the job's map");
    const std::string& text = row.fields[pop_c];
    const io::ParsedNumber number = io::parse_number(text);
    if (number.status != io::NumberStatus::ok || !io::is_whole_decimal(text) || number.value < 0 ||
        number.value > largest)
      throw InputError({path, row.line, kPopulationColumn}, "population '" + text + "' is not a whole number 0 or more",
                       "give the people living in the fine unit (at most " +
                           std::to_string(static_cast<std::int64_t>(largest)) + ")");
    w.fine_id.push_back(id);
    w.unit.push_back(*unit);
    w.population.push_back(static_cast<std::int64_t>(number.value));
    w.line.push_back(row.line);
    sum[*unit] += w.population.back();
    ++fine_count[*unit];
  }
  std::size_t differing = 0;
  std::int64_t worst = 0, total_difference = 0;
  UnitIndex worst_unit = 0;
  for (UnitIndex u = 0; u < graph.unit_count(); ++u) {
    if (fine_count[u] == 0)
      throw InputError({path, 0, kUnitColumn}, "unit '" + graph.unit_id(u) + "' of the map has no fine unit",
                       "give every unit of the map at least one fine unit");
    const std::int64_t diff = sum[u] - graph.population(u);
    if (diff == 0) continue;
    ++differing;
    total_difference += diff < 0 ? -diff : diff;
    if ((diff < 0 ? -diff : diff) > (worst < 0 ? -worst : worst)) worst = diff, worst_unit = u;
  }
  if (differing > 0)
    w.warnings.push_back(path + ": the fine units' populations of " + std::to_string(differing) +
                         " unit(s) do not add up to the unit table's (" + std::to_string(total_difference) +
                         " people in all; most in unit '" + graph.unit_id(worst_unit) + "': " +
                         std::to_string(sum[worst_unit]) + " against " +
                         std::to_string(graph.population(worst_unit)) +
                         "); the crosswalk's populations decide each unit's district, the unit table's "
                         "are measured");
  return w;
}

CarriedPlan carry_plan(const PlanRows& rows, const Crosswalk& w, const UnitGraph& graph) {
  const std::size_t n = w.fine_id.size();
  std::vector<std::size_t> line_of(n, 0);
  // (unit, district, population) per fine unit, sorted so that each unit's districts are together.
  std::vector<std::tuple<UnitIndex, DistrictIndex, std::int64_t>> fine;
  fine.reserve(n);
  for (const PlanRow& row : rows.rows) {
    const auto at = w.index.find(row.id);
    if (at == w.index.end())
      throw InputError({rows.source, row.line, rows.id_column}, "fine unit '" + row.id + "' is not in the crosswalk " +
                                                                    w.source,
                       "add it to the crosswalk, or give the plan on the fine units the crosswalk lists");
    const std::size_t i = at->second;
    if (line_of[i] != 0)
      throw InputError({rows.source, row.line, rows.id_column},
                       "fine unit '" + row.id + "' appears again (first on line " + std::to_string(line_of[i]) + ")",
                       "give each fine unit one district");
    line_of[i] = row.line;
    fine.emplace_back(w.unit[i], static_cast<DistrictIndex>(row.district - 1), w.population[i]);
  }
  for (std::size_t i = 0; i < n; ++i)
    if (line_of[i] == 0)
      throw InputError({rows.source, 0, rows.id_column},
                       "fine unit '" + w.fine_id[i] + "' of the crosswalk (line " + std::to_string(w.line[i]) +
                           ") has no district",
                       "give every fine unit of the crosswalk a district");
  std::sort(fine.begin(), fine.end());

  CarriedPlan c;
  c.fine_units = n;
  c.total_population = graph.total_population();
  c.district.assign(graph.unit_count(), kNoDistrict);
  for (std::size_t i = 0; i < fine.size();) {
    const UnitIndex u = std::get<0>(fine[i]);
    SplitUnit s{u, {}, kNoDistrict, {}};
    for (; i < fine.size() && std::get<0>(fine[i]) == u; ++i) {
      const DistrictIndex d = std::get<1>(fine[i]);
      if (s.parts.empty() || s.parts.back().district != d) s.parts.push_back({d, 0, 0});
      ++s.parts.back().fine_units;
      s.parts.back().population += std::get<2>(fine[i]);
    }
    // Most population, then most fine units, then the lower district (parts are in district order).
    const SplitUnit::Part* best = &s.parts.front();
    for (const SplitUnit::Part& p : s.parts)
      if (std::tie(p.population, p.fine_units) > std::tie(best->population, best->fine_units)) best = &p;
    s.district = best->district;
    c.district[u] = s.district;
    if (s.parts.size() > 1) {
      s.id = graph.unit_id(u);
      c.split_population += graph.population(u);
      c.split.push_back(std::move(s));
    }
  }
  c.method = "carried from " + std::to_string(n) + " fine units through the crosswalk " + w.source +
             ": each unit takes the district holding most of its crosswalk population (a tie: the district "
             "with more of its fine units, then the lower district number)";
  return c;
}

}  // namespace planmill::score
