#include "planmill/graph/load.hpp"

#include <algorithm>
#include <cstdint>
#include <cstdio>
#include <unordered_map>

#include "planmill/io/fields.hpp"
#include "planmill/base/error.hpp"
#include "planmill/io/csv.hpp"
#include "planmill/graph/map_csv.hpp"

namespace planmill {
namespace {

std::string quoted(std::string_view s) { return "'" + std::string(s) + "'"; }

// A unit-table column the job file names, with the job key that names it.
struct NamedColumn {
  std::string name;
  std::string key;
  std::size_t index = 0;
};

class UnitTableReader {
 public:
  UnitTableReader(const MapSpec& spec, const CsvTable& table) : spec_(spec), table_(table) {}

  std::size_t locate(const std::string& name, const std::string& key) {
    std::size_t found = std::string::npos;
    for (std::size_t i = 0; i < table_.header.size(); ++i) {
      if (table_.header[i] != name) continue;
      if (found != std::string::npos) {
        throw InputError({table_.source, 1, name},
                         "the header has two columns with this name (fields " + std::to_string(found + 1) +
                             " and " + std::to_string(i + 1) + ")",
                         "rename one of them so that '" + key + "' names a single column");
      }
      found = i;
    }
    if (found == std::string::npos) {
      throw InputError({table_.source, 1, name},
                       "no column with this name (named by '" + key + "' in " + job_name() +
                           "); the columns are " + table_.header_list(),
                       "fix the name in the job file or in the header line");
    }
    return found;
  }

  // A non-negative finite number from row `r`, column `c`.
  double number(const CsvRow& row, std::size_t c, const char* what) const {
    const std::string& text = row.fields[c];
    const io::ParsedNumber parsed = io::parse_number(text);
    const InputError::Where where{table_.source, row.line, table_.header[c]};
    switch (parsed.status) {
      case io::NumberStatus::empty:
        throw InputError(where, std::string(what) + " is empty", "write a number (0 if there is none)");
      case io::NumberStatus::not_a_number:
        throw InputError(where, std::string(what) + " " + quoted(text) + " is not a number",
                         "write a plain decimal number such as 12 or 3.5");
      case io::NumberStatus::not_finite:
        throw InputError(where, std::string(what) + " " + quoted(text) + " is not a finite number",
                         "write a finite decimal number");
      case io::NumberStatus::ok:
        break;
    }
    if (parsed.value < 0) {
      throw InputError(where, std::string(what) + " " + quoted(text) + " is negative",
                       "counts and measures must be 0 or more");
    }
    return parsed.value == 0.0 ? 0.0 : parsed.value;  // no negative zero
  }

  // A count (population, group, votes) no larger than largest_exact_count: then every tally over
  // units is exact in a double.
  double count(const CsvRow& row, std::size_t c, const char* what) const {
    const double value = number(row, c, what);
    const double largest = io::largest_exact_count(table_.rows.size());
    if (value > largest) {
      char bound[32];
      std::snprintf(bound, sizeof bound, "%.0f", largest);
      throw InputError({table_.source, row.line, table_.header[c]},
                       std::string(what) + " " + quoted(row.fields[c]) + " is too large (at most " + bound +
                           " for a map of " + std::to_string(table_.rows.size()) +
                           " units, so that every total stays exact)",
                       "check the column for a wrong unit or scale");
    }
    return value;
  }

  std::int64_t population(const CsvRow& row, std::size_t c) const {
    const double value = count(row, c, "population");
    if (!io::is_whole_decimal(row.fields[c])) {
      throw InputError({table_.source, row.line, table_.header[c]},
                       "population " + quoted(row.fields[c]) + " is not a whole number",
                       "populations count people: write a whole number");
    }
    return static_cast<std::int64_t>(value);
  }

  std::vector<double> counts(std::size_t c) const {
    std::vector<double> values;
    values.reserve(table_.rows.size());
    for (const CsvRow& row : table_.rows) values.push_back(count(row, c, "count"));
    return values;
  }

  std::vector<double> numbers(std::size_t c, const char* what) const {
    std::vector<double> values;
    values.reserve(table_.rows.size());
    for (const CsvRow& row : table_.rows) values.push_back(number(row, c, what));
    return values;
  }

  // Empty cells are errors for counties; for municipalities they mean "in none" (rural land).
  UnitCodes codes(std::size_t c, const char* what, bool empty_means_none = false) const {
    UnitCodes codes;
    std::unordered_map<std::string, std::uint32_t> code_of;
    codes.code.reserve(table_.rows.size());
    for (const CsvRow& row : table_.rows) {
      const std::string& name = row.fields[c];
      if (name.empty() && empty_means_none) {
        codes.code.push_back(UnitCodes::kNone);
        continue;
      }
      if (name.empty()) {
        throw InputError({table_.source, row.line, table_.header[c]}, std::string(what) + " code is empty",
                         "give every unit a code");
      }
      auto [it, inserted] = code_of.emplace(name, static_cast<std::uint32_t>(codes.names.size()));
      if (inserted) codes.names.push_back(name);
      codes.code.push_back(it->second);
    }
    return codes;
  }

  std::string job_name() const { return spec_.source.empty() ? "the job" : spec_.source; }

 private:
  const MapSpec& spec_;
  const CsvTable& table_;
};

// Count columns in graph order (groups, then every election's columns), each used once.
std::vector<NamedColumn> count_columns(const MapSpec& spec) {
  std::vector<NamedColumn> columns;
  for (const auto& name : spec.group_columns) columns.push_back({name, "map.groups"});
  for (const auto& election : spec.elections) {
    const std::string key = "map.elections";
    if (election.parties.size() != election.columns.size()) {
      throw InputError({spec.source, 0, key},
                       "election '" + election.name + "' lists " + std::to_string(election.parties.size()) +
                           " parties and " + std::to_string(election.columns.size()) + " columns",
                       "give one vote column per party, in the same order");
    }
    for (const auto& name : election.columns) columns.push_back({name, key + ".columns"});
  }
  for (std::size_t i = 0; i < columns.size(); ++i)
    for (std::size_t j = 0; j < i; ++j)
      if (columns[i].name == columns[j].name) {
        throw InputError({spec.source, 0, columns[i].key},
                         "column '" + columns[i].name + "' is used twice (also in '" + columns[j].key + "')",
                         "each count column can stand for one group or one party's votes only");
      }
  return columns;
}

void read_units(const MapSpec& spec, const CsvTable& units, UnitGraphBuilder& builder, LoadReport& report) {
  UnitTableReader reader(spec, units);
  const std::size_t id_col = reader.locate(spec.id_column, "map.id");
  const std::size_t pop_col = reader.locate(spec.population_column, "map.population");
  std::vector<NamedColumn> counts = count_columns(spec);
  for (auto& column : counts) column.index = reader.locate(column.name, column.key);
  auto optional = [&](const std::string& name, const char* key) {
    return name.empty() ? std::string::npos : reader.locate(name, key);
  };
  const std::size_t county_col = optional(spec.county_column, "map.county");
  const std::size_t town_col = optional(spec.municipality_column, "map.municipality");
  const std::size_t area_col = optional(spec.area_column, "map.area");
  const std::size_t perimeter_col = optional(spec.perimeter_column, "map.perimeter");
  const std::size_t outer_col = optional(spec.outer_boundary_column, "map.outer_boundary");

  if (units.rows.empty()) {
    throw InputError({units.source, 1, {}}, "the unit table has a header line but no units",
                     "add one row per unit below the header");
  }
  std::vector<std::size_t> line_of_unit;
  line_of_unit.reserve(units.rows.size());
  std::int64_t total = 0;
  for (const CsvRow& row : units.rows) {
    const std::string& id = row.fields[id_col];
    if (id.empty()) {
      throw InputError({units.source, row.line, spec.id_column}, "unit id is empty", "give every unit an id");
    }
    const std::int64_t population = reader.population(row, pop_col);
    if (__builtin_add_overflow(total, population, &total)) {
      throw InputError({units.source, row.line, spec.population_column},
                       "the total population grows too large to count", "check the population column");
    }
    if (!builder.add_unit(id, population)) {
      const UnitIndex first = *builder.find_unit(id);
      throw InputError({units.source, row.line, spec.id_column},
                       "unit id " + quoted(id) + " appears again (first on line " +
                           std::to_string(line_of_unit[first]) + ")",
                       "unit ids must be unique: remove or rename one of the two rows");
    }
    line_of_unit.push_back(row.line);
    if (population == 0) ++report.zero_population_units;
  }

  std::vector<std::size_t> groups;
  std::size_t next = 0;
  for (std::size_t i = 0; i < spec.group_columns.size(); ++i) groups.push_back(next++);
  for (const auto& column : counts) builder.add_count_column(column.name, reader.counts(column.index));
  if (!groups.empty()) builder.set_groups(std::move(groups));
  for (const auto& election : spec.elections) {
    Election e{election.name, election.parties, {}};
    for (std::size_t i = 0; i < election.columns.size(); ++i) e.columns.push_back(next++);
    builder.add_election(std::move(e));
  }
  if (county_col != std::string::npos) builder.set_counties(reader.codes(county_col, "county"));
  if (town_col != std::string::npos) builder.set_municipalities(reader.codes(town_col, "municipality", true));
  if (area_col != std::string::npos) builder.set_areas(reader.numbers(area_col, "area"));
  if (perimeter_col != std::string::npos) builder.set_perimeters(reader.numbers(perimeter_col, "perimeter"));
  if (outer_col != std::string::npos) builder.set_outer_boundary(reader.numbers(outer_col, "outer boundary"));

  if (report.zero_population_units > 0) {
    report.warnings.push_back(units.source + ": " + std::to_string(report.zero_population_units) +
                              " unit(s) have population 0 (allowed; they still join a district)");
  }
}

UnitIndex adjacency_end(const CsvTable& adjacency, const CsvRow& row, std::size_t c,
                        const UnitGraphBuilder& builder) {
  const std::string& id = row.fields[c];
  const InputError::Where where{adjacency.source, row.line, adjacency.header[c]};
  if (id.empty()) throw InputError(where, "edge with a missing unit id", "give both unit ids of every edge");
  if (auto u = builder.find_unit(id)) return *u;
  std::string hint = "every id must be a unit of the unit table";
  const std::string_view trimmed = io::trim_blanks(id);
  if (trimmed != id && builder.find_unit(trimmed)) hint = "remove the spaces around it";
  throw InputError(where, "unknown unit id " + quoted(id), hint);
}

void read_adjacency(const CsvTable& adjacency, UnitGraphBuilder& builder, LoadReport& report) {
  const std::size_t width = adjacency.header.size();
  if (width != 2 && width != 3) {
    throw InputError({adjacency.source, 1, {}},
                     "the adjacency table has " + std::to_string(width) + " columns",
                     "write 2 (unit id, unit id) or 3 (unit id, unit id, shared boundary length)");
  }
  std::size_t first_duplicate_line = 0;
  std::string first_duplicate;
  for (const CsvRow& row : adjacency.rows) {
    const UnitIndex a = adjacency_end(adjacency, row, 0, builder);
    const UnitIndex b = adjacency_end(adjacency, row, 1, builder);
    if (a == b) {
      throw InputError({adjacency.source, row.line, adjacency.header[1]},
                       "unit " + quoted(row.fields[0]) + " is listed as its own neighbour",
                       "remove this row");
    }
    double length = -1.0;
    if (width == 3) {
      const InputError::Where where{adjacency.source, row.line, adjacency.header[2]};
      const io::ParsedNumber parsed = io::parse_number(row.fields[2]);
      if (parsed.status == io::NumberStatus::empty)
        throw InputError(where, "shared boundary length is empty", "write the length (0 if unknown)");
      if (parsed.status != io::NumberStatus::ok)
        throw InputError(where, "shared boundary length " + quoted(row.fields[2]) + " is not a finite number",
                         "write a plain decimal number");
      if (parsed.value < 0)
        throw InputError(where, "shared boundary length " + quoted(row.fields[2]) + " is negative",
                         "lengths must be 0 or more");
      length = parsed.value == 0.0 ? 0.0 : parsed.value;
    }
    if (builder.add_edge(a, b, length) == UnitGraphBuilder::EdgeResult::duplicate_merged) {
      if (report.duplicate_edges_merged++ == 0) {
        first_duplicate_line = row.line;
        first_duplicate = quoted(row.fields[0]) + "-" + quoted(row.fields[1]);
      }
    }
  }
  if (report.duplicate_edges_merged > 0) {
    report.warnings.push_back(adjacency.source + ": " + std::to_string(report.duplicate_edges_merged) +
                              " edge(s) listed more than once (in either order) were merged; the first is " +
                              first_duplicate + " on line " + std::to_string(first_duplicate_line) +
                              (width == 3 ? "; the first length given was kept" : ""));
  }
}

void require_connected(const UnitGraph& graph, const CsvTable& adjacency) {
  const UnitGraph::Components parts = graph.components();
  if (parts.sizes.size() <= 1) return;
  std::string sizes;
  for (std::size_t i = 0; i < parts.sizes.size() && i < 10; ++i)
    sizes += (i ? ", " : "") + std::to_string(parts.sizes[i]);
  if (parts.sizes.size() > 10) sizes += ", ...";
  // Name a few units outside the largest part, so the user can find them on the map.
  std::string examples;
  std::size_t named = 0;
  for (UnitIndex u = 0; u < graph.unit_count() && named < 5; ++u) {
    if (parts.of_unit[u] == 0) continue;
    examples += (named++ ? ", " : "") + quoted(graph.unit_id(u));
  }
  throw InputError({adjacency.source, 0, {}},
                   "the map is not connected: " + std::to_string(parts.sizes.size()) +
                       " separate parts with " + sizes + " units; units outside the largest part include " +
                       examples,
                   "every district must be connected, so add bridging edges to the adjacency file that "
                   "join each part to the rest (for example islands joined by a ferry or a bridge)");
}

}  // namespace

UnitGraph build_unit_graph(const MapSpec& spec, const CsvTable& units, const CsvTable& adjacency,
                           LoadReport* report) {
  LoadReport local;
  LoadReport& out = report ? *report : local;
  out = LoadReport{};
  UnitGraphBuilder builder;
  read_units(spec, units, builder, out);
  read_adjacency(adjacency, builder, out);
  UnitGraph graph = std::move(builder).build();
  require_connected(graph, adjacency);
  return graph;
}

UnitGraph load_unit_graph(const MapSpec& spec, LoadReport* report) {
  const CsvTable units = read_csv_file(spec.units_path);
  const CsvTable adjacency = read_csv_file(spec.adjacency_path);
  return build_unit_graph(spec, units, adjacency, report);
}

}  // namespace planmill
