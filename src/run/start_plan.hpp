#pragma once
// A chain's first plan, as the runner gives it (private to src/run): the job's start plan, or a
// random plan by recursive bisection from a stream of the chain's own. The blind check
// (run/blind_check.hpp) draws it again on a map with permuted columns.
#include <cstdint>
#include <optional>

#include "planmill/graph/unit_graph.hpp"
#include "planmill/job/job.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/rules/rules.hpp"
#include "planmill/seed/seed_plan.hpp"

namespace planmill::runner {

// `given`: the job's start plan when it names one (its labels are used on `graph`). `fewest`:
// the search of county splits "fewest", whose distinct plans the chains without a given start
// take in turn (chain i the plan i mod their number).
[[nodiscard]] Plan chain_start_plan(const JobSpec& job, const GraphHandle& graph,
                                    const std::optional<Plan>& given, const RuleSet& rules,
                                    std::uint64_t run_seed, std::uint64_t chain_index,
                                    const FewestSplits* fewest = nullptr);

}  // namespace planmill::runner
