#pragma once
// Exact enumeration of every plan of a small graph: all partitions of the units into exactly k
// connected districts, each with population in [pop_min, pop_max]. Used to get exact target laws
// for testing samplers on graphs of a few dozen units (the count grows very fast: the 6x6 grid
// into 6 districts of 6 has 451,206 plans, the 7x7 grid into 7 about 1.6e8).
//
// Each plan is visited once, labelled canonically: unit 0 is in district 0 and districts are
// numbered in the order of their smallest unit.
#include <cstddef>
#include <cstdint>
#include <functional>
#include <span>

#include "planmill/base/ids.hpp"
#include "planmill/graph/unit_graph.hpp"

namespace planmill {

// Calls visit(assignment) for every plan; the span (district of each unit) is valid only during
// the call. Throws std::invalid_argument if k is 0 or does not fit a DistrictIndex.
void for_each_plan(const UnitGraph& graph, std::size_t k, std::int64_t pop_min,
                   std::int64_t pop_max,
                   const std::function<void(std::span<const DistrictIndex>)>& visit);

[[nodiscard]] std::size_t count_plans(const UnitGraph& graph, std::size_t k, std::int64_t pop_min,
                                      std::int64_t pop_max);

}  // namespace planmill
