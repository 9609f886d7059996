#pragma once
// Loading and validating the map from the unit table and adjacency CSV files (docs/inputs.md).
#include <string>
#include <vector>

#include "planmill/graph/map_spec.hpp"
#include "planmill/graph/unit_graph.hpp"

namespace planmill {

// Things worth telling the user that do not stop the job (merged duplicate edges,
// zero-population units). One line each, already worded.
struct LoadReport {
  std::vector<std::string> warnings;
  std::size_t duplicate_edges_merged = 0;
  std::size_t zero_population_units = 0;
};

// Throws InputError naming file, line and column for every malformed input, including a
// disconnected graph (with component sizes and how to add bridging edges).
[[nodiscard]] UnitGraph load_unit_graph(const MapSpec& spec, LoadReport* report = nullptr);

}  // namespace planmill
