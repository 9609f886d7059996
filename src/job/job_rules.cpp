#include "planmill/job/job_rules.hpp"

#include <optional>
#include <utility>

#include "planmill/base/error.hpp"
#include "planmill/base/random.hpp"

namespace planmill {

RuleSet make_rule_set(const RulesSpec& spec, const UnitGraph& graph, const std::string& job_file) {
  RuleSet rules;
  if (!(spec.population_tolerance >= 0.0 && spec.population_tolerance < 1.0))
    throw InputError({job_file, 0, "rules.population_tolerance"}, "must lie in [0, 1)",
                     "give the allowed deviation as a fraction, e.g. 0.05 for 5%");
  rules.population_tolerance = spec.population_tolerance;
  const auto limit = [](std::int64_t value) {
    return value >= 0 ? std::optional<std::size_t>(static_cast<std::size_t>(value)) : std::nullopt;
  };
  if (spec.population_range_max >= 0.0) rules.population_range_max = spec.population_range_max;
  rules.county_splits_max = limit(spec.county_splits_max);
  rules.county_pieces_max = limit(spec.county_pieces_max);
  rules.county_districts_max = limit(spec.county_districts_max);
  rules.municipality_splits_max = limit(spec.municipality_splits_max);
  rules.municipality_pieces_max = limit(spec.municipality_pieces_max);
  rules.municipality_districts_max = limit(spec.municipality_districts_max);
  rules.cut_edges_weight = spec.cut_edges_weight;
  rules.county_splits_weight = spec.county_splits_weight;
  const char* remedy = "name the county column as map.county, or drop the county rules";
  for (const auto& [key, set] : {std::pair{"rules.county_splits_max", rules.county_splits_max.has_value()},
                                 std::pair{"rules.county_pieces_max", rules.county_pieces_max.has_value()},
                                 std::pair{"rules.county_districts_max", rules.county_districts_max.has_value()}})
    if (set && !graph.has_counties())
      throw InputError({job_file, 0, key}, "a county limit needs county codes, but the map has none", remedy);
  for (const auto& [key, set] :
       {std::pair{"rules.municipality_splits_max", rules.municipality_splits_max.has_value()},
        std::pair{"rules.municipality_pieces_max", rules.municipality_pieces_max.has_value()},
        std::pair{"rules.municipality_districts_max", rules.municipality_districts_max.has_value()}})
    if (set && !graph.has_municipalities())
      throw InputError({job_file, 0, key}, "a municipality limit needs municipality codes, but the map has none",
                       "name the municipality column as map.municipality, or drop the municipality rules");
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
    GroupShareTerm term{*column, g.threshold, g.weight};
    term.at_least = limit(g.at_least);
    term.at_most = limit(g.at_most);
    rules.group_share.push_back(term);
  }
  return rules;
}

RuleSet resolve_rules(const JobSpec& job, const GraphHandle& graph, FewestSplits* fewest) {
  RuleSet rules = make_rule_set(job.rules, *graph, job.path);
  if (!job.rules.county_splits_fewest) return rules;
  if (!graph->has_counties())
    throw InputError({job.path, 0, "rules.county_splits_max"}, "\"fewest\" needs county codes, but the map has none",
                     "name the county column as map.county, or drop the key");
  constexpr std::uint64_t kFewestSplitsStream = 5ULL << 60;
  Rng rng = make_stream(job.sampler.seed, kFewestSplitsStream);
  FewestSplits found;
  try {
    found = fewest_county_splits(graph, job.districts, rules, rng,
                                 static_cast<std::size_t>(job.rules.fewest_splits_attempts));
  } catch (const InfeasibleError& e) {
    throw InfeasibleError(std::string("rules.county_splits_max = \"fewest\": the search for the fewest county splits ") +
                          "found no plan meeting the other rules: " + e.what());
  }
  rules.county_splits_max = found.found;
  if (fewest) *fewest = std::move(found);
  return rules;
}

std::string describe_fewest(const FewestSplits& f) {
  std::string s = "at most " + std::to_string(f.found) + " counties split: split only as needed, the fewest found in " +
                  std::to_string(f.attempts) + " attempts (" + std::to_string(f.valid_plans) + " valid plans); " +
                  std::to_string(f.lower_bound) + (f.lower_bound == 1 ? " county holds" : " counties hold") +
                  " more people than a district may, so no plan splits fewer";
  s += f.proven() ? ": the fewest possible" : ": the fewest possible lies between the two";
  return s;
}

}  // namespace planmill
