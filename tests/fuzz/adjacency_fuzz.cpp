// Fuzz target: the adjacency reader, over a fixed map of eight units "a".."h".
#include <cstdint>

#include "fuzz_support.hpp"
#include "planmill/io/csv.hpp"
#include "planmill/graph/map_csv.hpp"

using namespace planmill;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const CsvTable units = parse_csv_text("id,pop\na,1\nb,2\nc,3\nd,0\ne,5\nf,6\ng,7\nh,8\n", "units.csv");
  MapSpec spec;
  spec.id_column = "id";
  spec.population_column = "pop";
  fuzz::expect_only_input_errors([&] {
    const CsvTable adjacency = parse_csv_text(fuzz::as_text(data, size), "adjacency.csv");
    LoadReport report;
    const UnitGraph g = build_unit_graph(spec, units, adjacency, &report);
    if (g.unit_count() != 8) fuzz::bug("unit count");
    if (g.edge_count() + report.duplicate_edges_merged != adjacency.rows.size()) fuzz::bug("edge count");
    std::size_t degree_sum = 0;
    for (UnitIndex u = 0; u < g.unit_count(); ++u) {
      degree_sum += g.degree(u);
      for (UnitIndex v : g.neighbors(u))
        if (v == u || v >= g.unit_count()) fuzz::bug("neighbour out of range");
    }
    if (degree_sum != 2 * g.edge_count()) fuzz::bug("degree sum");
  });
  return 0;
}
