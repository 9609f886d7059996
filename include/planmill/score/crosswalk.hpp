#pragma once
// Plans given on finer units than the map's (enacted plans are usually block assignments), carried
// onto the map's units through a crosswalk: a CSV naming, per fine unit, the map unit it lies in
// and its population (columns fine_unit, unit, population; docs/score.md). A unit takes the
// district holding most of its crosswalk population; a tie goes to the district with more of its
// fine units, then to the lower district number (so a unit of zero population takes the district
// with most of its fine units).
#include <cstddef>
#include <cstdint>
#include <string>
#include <unordered_map>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/graph/unit_graph.hpp"
#include "planmill/seed/plan_csv.hpp"

namespace planmill::score {

struct Crosswalk {
  std::string source;
  std::vector<std::string> fine_id;
  std::vector<UnitIndex> unit;           // per fine unit, the map unit it lies in
  std::vector<std::int64_t> population;  // per fine unit
  std::vector<std::size_t> line;         // per fine unit, its line in the file
  std::unordered_map<std::string, std::size_t> index;  // fine id -> row
  // Units whose fine units' populations do not add up to the unit table's population, and by how
  // much (a warning, not an error: block and precinct counts often differ slightly).
  std::vector<std::string> warnings;
};

// Throws InputError naming the file, line and column: a missing column, an empty or repeated fine
// id, a map unit the map does not have, a population that is not a whole number >= 0 (or beyond
// io::largest_exact_count), a map unit without any fine unit.
[[nodiscard]] Crosswalk read_crosswalk(const std::string& path, const UnitGraph& graph);

// A unit whose fine units lie in two or more districts.
struct SplitUnit {
  UnitIndex unit;
  std::string id;
  DistrictIndex district;  // the one it was given (0-based)
  struct Part {
    DistrictIndex district;  // 0-based
    std::size_t fine_units;
    std::int64_t population;  // crosswalk population
  };
  std::vector<Part> parts;  // by district
};

struct CarriedPlan {
  std::vector<DistrictIndex> district;  // per map unit, 0-based
  std::size_t fine_units = 0;
  std::vector<SplitUnit> split;               // in map order
  std::int64_t split_population = 0;          // map (unit table) population of the split units
  std::int64_t total_population = 0;          // the map's
  std::string method;                         // one sentence for reports
};

// Every fine unit of `rows` must be in the crosswalk and appear once, and every fine unit of the
// crosswalk must be in `rows`; otherwise InputError naming the plan file and line.
[[nodiscard]] CarriedPlan carry_plan(const PlanRows& rows, const Crosswalk& crosswalk, const UnitGraph& graph);

}  // namespace planmill::score
