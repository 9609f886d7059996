// [map] of the job file, and the paths it names.
#include <algorithm>
#include <cmath>
#include <sstream>

#include "job/job_file.hpp"

namespace planmill::job_file {

namespace fs = std::filesystem;

std::string resolve(const std::string& base_dir, const std::string& path) {
  if (path.empty()) return path;
  fs::path p(path);
  if (p.is_absolute() || base_dir.empty()) return p.lexically_normal().string();
  return (fs::path(base_dir) / p).lexically_normal().string();
}

void read_map(Section& top, JobSpec& job, const std::string& base) {
  const toml::table* table = top.table("map");
  if (!table) top.fail("map", "section [map] is missing", "add [map] with units, adjacency, id and population");
  Section map(*table, "map", job.path);
  MapSpec& m = job.map;
  m.source = job.path;
  m.units_path = resolve(base, map.string("units", "", true));
  m.adjacency_path = resolve(base, map.string("adjacency", "", true));
  m.id_column = map.string("id", "", true);
  m.population_column = map.string("population", "", true);
  m.county_column = map.string("county", "");
  m.municipality_column = map.string("municipality", "");
  m.area_column = map.string("area", "");
  m.perimeter_column = map.string("perimeter", "");
  m.outer_boundary_column = map.string("outer_boundary", "");
  m.geometry_path = resolve(base, map.string("geometry", ""));
  m.group_columns = map.strings("groups");
  if (const toml::node* node = map.get("elections")) {
    const toml::array* list = node->as_array();
    if (!list || !list->is_array_of_tables())
      map.fail("elections", "must be a list of tables", "write each one as a [[map.elections]] section");
    std::set<std::string> names;
    for (const toml::node& item : *list) {
      Section e(*item.as_table(), "map.elections", job.path);
      ElectionSpec spec;
      spec.name = e.string("name", "", true);
      spec.parties = e.strings("parties");
      spec.columns = e.strings("columns");
      if (spec.parties.size() < 2) e.fail("parties", "an election needs at least two parties", "list them");
      if (spec.columns.size() != spec.parties.size())
        e.fail("columns", "must name one vote column per party (" + std::to_string(spec.parties.size()) + ")",
               "list the columns in the order of 'parties'");
      if (!names.insert(spec.name).second) e.fail("name", "election '" + spec.name + "' appears twice", "rename one");
      e.reject_unknown();
      m.elections.push_back(std::move(spec));
    }
  }
  map.reject_unknown();
}

}  // namespace planmill::job_file
