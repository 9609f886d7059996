#pragma once
// The observables recorded with every plan, in a fixed order:
//   population_deviation  largest |pop - ideal| / ideal over districts
//   cut_edges             edges between districts
//   county_splits         counties meeting two or more districts
//   energy                J(P) of the rules (rules/rules.hpp)
//   group_districts.<column>     districts meeting each group-share term's threshold
//   seats.<election>.<party>    districts where the party has the most votes (ties: nobody)
#include <span>
#include <string>
#include <vector>

#include "planmill/moves/kernel.hpp"

namespace planmill {

[[nodiscard]] std::vector<std::string> observable_names(const UnitGraph& graph, const RuleSet& rules);

// Fills `out` (size observable_names().size()) from the state. No allocation.
void compute_observables(const UnitGraph& graph, const ChainState& state, std::span<double> out);

}  // namespace planmill
