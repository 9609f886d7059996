#pragma once
// The map loader's core, on tables already parsed (so tests and fuzzers need no files).
// load_unit_graph (graph/load.hpp) reads the two files and calls this.
#include "planmill/graph/load.hpp"
#include "planmill/graph/map_spec.hpp"
#include "planmill/graph/unit_graph.hpp"
#include "planmill/io/csv.hpp"

namespace planmill {

// Builds the unit graph from the unit table and the adjacency table (docs/inputs.md). The tables'
// `source` names them in errors; spec.source names the job file for errors in the spec itself.
[[nodiscard]] UnitGraph build_unit_graph(const MapSpec& spec, const CsvTable& units,
                                         const CsvTable& adjacency, LoadReport* report = nullptr);

}  // namespace planmill
