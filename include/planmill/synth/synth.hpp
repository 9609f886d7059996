#pragma once
// The invented demo state: an irregular outline tiled by axis-aligned rectangles (small units in
// the cities, large ones in the countryside), with counties, municipalities, one minority group
// and two elections. Everything follows from the seed: the same options give byte-identical
// files. docs/synth.md describes the model and the columns.
#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

namespace planmill {

struct SynthOptions {
  std::size_t units = 2000;    // exactly this many units (>= 16 and >= 2 * districts)
  std::size_t districts = 20;  // written to job.toml as [districts] count
  std::uint64_t seed = 1;
  std::string out_dir;  // created if missing
  // How many cities: 0 picks 3 to 6 by map size (the default state); 1 to 6 asks for exactly
  // that many, e.g. 2 for a state whose plans split into two groups around two dense centres.
  std::size_t cities = 0;
};

struct SynthElectionSummary {
  std::string name;
  double share_a = 0.0;  // statewide share of party A among the two parties
};

struct SynthSummary {
  std::size_t units = 0;
  std::size_t edges = 0;
  std::size_t counties = 0;
  std::size_t municipalities = 0;
  std::size_t cities = 0;  // the large municipalities; the others are towns
  std::int64_t population = 0;
  std::int64_t group_population = 0;
  double area_km2 = 0.0;  // area of the outline (sum of unit areas)
  double ideal_district_population = 0.0;
  std::int64_t largest_unit_population = 0;
  std::vector<SynthElectionSummary> elections;
  std::vector<std::string> files;  // paths written, in writing order
};

// Builds the state and writes units.csv, adjacency.csv, units.geojson and job.toml into
// options.out_dir, each atomically (temporary file, then rename). Throws InputError (column
// "--units", "--districts", "--cities" or "--out") for bad options or an unwritable folder.
SynthSummary write_synthetic_state(const SynthOptions& options);

}  // namespace planmill
