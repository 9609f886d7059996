#pragma once
// The observables recorded with every plan, in a fixed order:
//   population_deviation         largest |pop - ideal| / ideal over districts
//   energy                       J(P) of the rules (rules/rules.hpp)
//   group_districts.<column>     districts meeting each group-share term's threshold
//   then the measure scalars of the job's [measures] (MeasureEvaluator::scalar_names(): seats,
//   efficiency gap, ..., compactness.cut_edges, splits.*; docs/measures.md)
// and, beside them, the measures' sorted vectors (MeasureEvaluator::vector_names()).
#include <span>
#include <string>
#include <vector>

#include "planmill/measures/measures.hpp"
#include "planmill/moves/kernel.hpp"
#include "planmill/seed/seed_plan.hpp"

namespace planmill {

[[nodiscard]] std::vector<std::string> observable_names(const UnitGraph& graph, const RuleSet& rules,
                                                        const MeasureEvaluator& measures);

// Measures the state's plan with `measures` (split tallies taken from the state's RuleTracker)
// and fills `out` (size observable_names().size()) and `sorted` (the sorted vectors one after
// another, vector_names().size() * district_count()). No allocation.
void compute_observables(const ChainState& state, MeasureEvaluator& measures, std::span<double> out,
                         std::span<double> sorted);

// What `measures` measures, as a JSON object (text): elections with their parties, groups with
// denominator and thresholds, the competitive band, the splits, the output names, and
// "reads_group_or_vote_columns" (true when `rules` or the measures read group or vote columns:
// the ensemble is then no race-blind or party-blind baseline), and with `fewest` (county splits
// "fewest") "county_splits_fewest": the cap found, its lower bound and the search's effort.
[[nodiscard]] std::string measures_json(const UnitGraph& graph, const RuleSet& rules,
                                        const MeasureEvaluator& measures, const FewestSplits* fewest = nullptr);

}  // namespace planmill
