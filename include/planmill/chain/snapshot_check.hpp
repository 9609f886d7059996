#pragma once
// Checks of a chain or ladder snapshot's plans without building a chain, e.g. before a resume
// builds one from an edited run state. Chain::restore() and Ladder::restore() refuse the same
// snapshots.
#include <cstddef>
#include <string_view>

#include "planmill/graph/unit_graph.hpp"

namespace planmill {

// A Chain::save() text whose plan fits the map, has `district_count` districts, leaves none empty
// and has every district contiguous; else throws std::invalid_argument saying what is wrong.
void check_chain_snapshot(std::string_view snapshot, const GraphHandle& graph,
                          std::size_t district_count);
// The same for every replica of a Ladder::save() text (defined in temper/ladder.cpp).
void check_ladder_snapshot(std::string_view snapshot, const GraphHandle& graph,
                           std::size_t district_count);

}  // namespace planmill
