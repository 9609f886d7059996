#pragma once
// What the job file's [map] section says: which files hold the map and which unit-table column
// plays which role. Paths are already resolved relative to the job file.
#include <string>
#include <vector>

namespace planmill {

struct ElectionSpec {
  std::string name;
  std::vector<std::string> parties;  // labels, e.g. "A", "B"
  std::vector<std::string> columns;  // unit-table column of each party's votes, same order
};

struct MapSpec {
  std::string units_path;       // unit table CSV
  std::string adjacency_path;   // adjacency CSV
  std::string id_column;        // required
  std::string population_column;  // required
  std::string county_column;    // optional (empty = none)
  std::string municipality_column;
  std::string area_column;
  std::string perimeter_column;
  std::string outer_boundary_column;
  std::string geometry_path;  // optional GeoJSON of the units' shapes (for maps in reports)
  std::vector<std::string> group_columns;  // demographic counts
  std::vector<ElectionSpec> elections;
  // Where each setting came from, for error messages ("job.toml:7: 'map.population'").
  std::string source;  // job file path, or empty when built in code
};

}  // namespace planmill
