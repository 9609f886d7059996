#pragma once
// The job file's [rules] words as the RuleSet the kernels keep.
#include <string>

#include "planmill/graph/unit_graph.hpp"
#include "planmill/job/job.hpp"
#include "planmill/rules/rules.hpp"

namespace planmill {

// The job file's rules resolved against a map: group names become count columns. Throws
// InputError (keyed "rules.<key>", file `job_file`) when a rule needs data the map lacks.
[[nodiscard]] RuleSet make_rule_set(const RulesSpec& spec, const UnitGraph& graph,
                                    const std::string& job_file = {});

}  // namespace planmill
