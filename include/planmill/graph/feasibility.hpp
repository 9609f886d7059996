#pragma once
// Feasibility on its face: facts about the map, k and the tolerance that rule out every plan,
// found before any sampling. Passing does not prove a plan exists (that needs a search).
#include <cstddef>
#include <string>

#include "planmill/graph/unit_graph.hpp"

namespace planmill {

// Throws InputError keyed on the job key to change ('districts.count',
// 'rules.population_tolerance', or 'map.population' when the map has no people), saying what to
// do. Each district must hold a whole population within [(1-eps) ideal, (1+eps) ideal],
// ideal = total / districts.
void check_feasible(const UnitGraph& graph, std::size_t districts, double population_tolerance,
                    const std::string& job_path);

}  // namespace planmill
