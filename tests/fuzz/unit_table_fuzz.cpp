// Fuzz target: the unit-table reader. Column roles are taken from the header the fuzzer writes
// (field 1 = id, 2 = population, 3 = county, 4 = group, 5 and 6 = an election, 7 = area,
// 8 = municipality), so every check is reachable; the adjacency is a path through the units in
// file order.
#include <cstdint>

#include "fuzz_support.hpp"
#include "planmill/io/csv.hpp"
#include "planmill/graph/map_csv.hpp"

using namespace planmill;

namespace {

// Writing a parsed table back as CSV and parsing that again must give the same fields.
void check_round_trip(const CsvTable& table) {
  std::string text;
  auto put_row = [&](const std::vector<std::string>& fields) {
    for (std::size_t i = 0; i < fields.size(); ++i) text += (i ? "," : "") + csv_field(fields[i]);
    text += '\n';
  };
  put_row(table.header);
  for (const auto& row : table.rows) put_row(row.fields);
  const CsvTable again = parse_csv_text(text, "round trip");
  if (again.header != table.header || again.rows.size() != table.rows.size()) fuzz::bug("round trip shape");
  for (std::size_t r = 0; r < table.rows.size(); ++r)
    if (again.rows[r].fields != table.rows[r].fields) fuzz::bug("round trip fields");
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  fuzz::expect_only_input_errors([&] {
    const CsvTable units = parse_csv_text(fuzz::as_text(data, size), "units.csv");
    check_round_trip(units);
    const auto& h = units.header;
    MapSpec spec;
    spec.source = "job.toml";
    spec.id_column = h[0];
    spec.population_column = h.size() > 1 ? h[1] : "population";
    if (h.size() > 2) spec.county_column = h[2];
    if (h.size() > 3) spec.group_columns = {h[3]};
    if (h.size() > 5) spec.elections.push_back({"e", {"A", "B"}, {h[4], h[5]}});
    if (h.size() > 6) spec.area_column = h[6];
    if (h.size() > 7) spec.municipality_column = h[7];

    CsvTable adjacency;
    adjacency.source = "adjacency.csv";
    adjacency.header = {"a", "b"};
    const std::size_t id = units.column_index(h[0]);
    for (std::size_t r = 1; r < units.rows.size(); ++r)
      adjacency.rows.push_back({r, {units.rows[r - 1].fields[id], units.rows[r].fields[id]}});

    LoadReport report;
    const UnitGraph g = build_unit_graph(spec, units, adjacency, &report);
    if (g.unit_count() != units.rows.size()) fuzz::bug("unit count");
    std::int64_t total = 0;
    for (UnitIndex u = 0; u < g.unit_count(); ++u) total += g.population(u);
    if (total != g.total_population()) fuzz::bug("total population");
  });
  return 0;
}
