#pragma once
// The long table of district tallies: one CSV row per (chain, record, district) of the chosen
// plans, taken from a Plan rebuilt on the run's map (docs/export.md, "District tallies").
#include <cstdint>
#include <string>

#include "planmill/plan/plan.hpp"

namespace planmill {

// chain,record,step,district,population,<count columns under their map names>,area,perimeter.
// InputError naming the unit table when a count column's name repeats a fixed column's.
[[nodiscard]] std::string tallies_header(const UnitGraph& graph, const std::string& units_path);

// Appends the plan's k rows, districts 1..k. Population and counts are written as integers when
// whole (exact sums of whole inputs), else in shortest round-trip form; area is NA unless the map
// has areas, perimeter NA unless it has outer boundaries and shared boundary lengths.
// A district's area and perimeter as the tallies give them: NaN (NA in the CSV) when the map has
// no areas, or no outer boundaries and shared lengths.
[[nodiscard]] double tally_area(const Plan& plan, DistrictIndex d);
[[nodiscard]] double tally_perimeter(const Plan& plan, DistrictIndex d);

void append_tally_rows(std::string& table, std::uint64_t chain, std::uint64_t record,
                       std::uint64_t step, const Plan& plan);

}  // namespace planmill
