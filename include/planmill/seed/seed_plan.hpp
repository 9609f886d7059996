#pragma once
// Starting plans: a random valid plan by recursive spanning-tree bisection, the plans with the
// fewest county splits such a search finds ("split only as needed"), or a user's plan checked
// against the rules.
#include <cstddef>
#include <string>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/rules/rules.hpp"

namespace planmill {

struct SeedEffort {
  std::size_t trees_per_split = 200;  // spanning trees tried before starting over
  std::size_t restarts = 50;          // fresh starts before giving up
};

// Splits one district at a time off the rest along a spanning tree, so every district is connected
// and within the population bounds. Under county or municipality caps, later attempts weight trees
// toward edges inside those areas and prefer cuts that split fewer of them; under group-share
// counts (at_least / at_most), cuts that make the districts still needed. Throws InfeasibleError
// after the effort is spent, naming the rule no attempt met and the closest attempt.
[[nodiscard]] Plan random_seed_plan(const GraphHandle& graph, std::size_t districts, const RuleSet& rules,
                                    Rng& rng, const SeedEffort& effort = {});

// "Split only as needed": the fewest county splits of any plan meeting `rules` (whose county
// split cap is ignored) that `attempts` county-weighted bisections find, and a lower bound no plan
// can beat: the counties holding more people than one district may (each must be split).
struct FewestSplits {
  std::size_t lower_bound = 0;
  std::size_t found = 0;
  std::size_t attempts = 0;
  std::size_t valid_plans = 0;  // attempts that met every hard rule but the split cap
  std::vector<Plan> plans;      // distinct plans with `found` splits, in the order found (at most 16)
  [[nodiscard]] bool proven() const noexcept { return found == lower_bound; }
};
// Throws InfeasibleError when no attempt meets the other rules; invalid_argument without counties.
[[nodiscard]] FewestSplits fewest_county_splits(const GraphHandle& graph, std::size_t districts, RuleSet rules,
                                                Rng& rng, std::size_t attempts);

// Counties with more people than a district's upper bound: no valid plan keeps them whole.
[[nodiscard]] std::size_t counties_too_big_to_keep(const UnitGraph& graph, std::size_t districts,
                                                   const RuleSet& rules);

// Throws InfeasibleError naming each district that breaks a hard rule, and by how much.
void check_seed_plan(const Plan& plan, const RuleSet& rules, const std::string& source);

}  // namespace planmill
