#include "planmill/job/job_rules.hpp"

#include <optional>

#include "planmill/base/error.hpp"

namespace planmill {

RuleSet make_rule_set(const RulesSpec& spec, const UnitGraph& graph, const std::string& job_file) {
  RuleSet rules;
  if (!(spec.population_tolerance >= 0.0 && spec.population_tolerance < 1.0))
    throw InputError({job_file, 0, "rules.population_tolerance"}, "must lie in [0, 1)",
                     "give the allowed deviation as a fraction, e.g. 0.05 for 5%");
  rules.population_tolerance = spec.population_tolerance;
  if (spec.county_splits_max >= 0)
    rules.county_splits_max = static_cast<std::size_t>(spec.county_splits_max);
  rules.cut_edges_weight = spec.cut_edges_weight;
  rules.county_splits_weight = spec.county_splits_weight;
  const char* remedy = "name the county column as map.county, or drop the county rules";
  if (rules.county_splits_max && !graph.has_counties())
    throw InputError({job_file, 0, "rules.county_splits_max"},
                     "a county-split limit needs county codes, but the map has none", remedy);
  if (rules.county_splits_weight != 0.0 && !graph.has_counties())
    throw InputError({job_file, 0, "rules.weights.county_splits"},
                     "a county-split weight needs county codes, but the map has none", remedy);
  for (const GroupShareSpec& g : spec.group_share) {
    const std::optional<std::size_t> column = graph.find_count_column(g.group);
    if (!column)
      throw InputError({job_file, 0, "rules.group_share"},
                       "group '" + g.group + "' is not a count column of the map",
                       "list it in map.groups and check the unit table's header");
    if (!(g.threshold >= 0.0 && g.threshold <= 1.0))
      throw InputError({job_file, 0, "rules.group_share"},
                       "threshold of group '" + g.group + "' is outside [0, 1]",
                       "give the share as a fraction, e.g. 0.5");
    rules.group_share.push_back({*column, g.threshold, g.weight});
  }
  return rules;
}

}  // namespace planmill
