#pragma once
// Starting plans: a random valid plan by recursive spanning-tree bisection, or a user's plan
// checked against the rules.
#include <cstddef>
#include <string>

#include "planmill/base/random.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/rules/rules.hpp"

namespace planmill {

struct SeedEffort {
  std::size_t trees_per_split = 200;  // spanning trees tried before starting over
  std::size_t restarts = 50;          // fresh starts before giving up
};

// Splits one district at a time off the rest along a uniform spanning tree, so every district is
// connected and within the population bounds; throws InfeasibleError after the effort is spent.
[[nodiscard]] Plan random_seed_plan(const GraphHandle& graph, std::size_t districts, const RuleSet& rules,
                                    Rng& rng, const SeedEffort& effort = {});

// Throws InfeasibleError naming each district that breaks a hard rule, and by how much.
void check_seed_plan(const Plan& plan, const RuleSet& rules, const std::string& source);

}  // namespace planmill
