#pragma once
// The job file's [rules] words as the RuleSet the kernels keep.
#include <string>

#include "planmill/graph/unit_graph.hpp"
#include "planmill/job/job.hpp"
#include "planmill/rules/rules.hpp"
#include "planmill/seed/seed_plan.hpp"

namespace planmill {

// The job file's rules resolved against a map: group names become count columns. Throws
// InputError (keyed "rules.<key>", file `job_file`) when a rule needs data the map lacks.
// Leaves a "fewest" county split cap unset: resolve_rules sets it.
[[nodiscard]] RuleSet make_rule_set(const RulesSpec& spec, const UnitGraph& graph,
                                    const std::string& job_file = {});

// The job's rules for its map, as make_rule_set, and with county_splits_max = "fewest" resolved:
// fewest_county_splits (seed/seed_plan.hpp) searches first, on a stream keyed from the job's seed
// (so every rank, resume and later command finds the same), and the cap becomes the fewest found.
// `fewest` receives that search when asked for; InfeasibleError when it finds no valid plan.
[[nodiscard]] RuleSet resolve_rules(const JobSpec& job, const GraphHandle& graph, FewestSplits* fewest = nullptr);

// "at most 7 counties split: split only as needed, the fewest found in 100 attempts (7 counties
// hold more people than a district may, so no plan splits fewer: the fewest possible)".
[[nodiscard]] std::string describe_fewest(const FewestSplits& fewest);

}  // namespace planmill
