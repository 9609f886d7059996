#include "planmill/run/observables.hpp"

#include <algorithm>
#include <cassert>
#include <nlohmann/json.hpp>

namespace planmill {

std::vector<std::string> observable_names(const UnitGraph& graph, const RuleSet& rules,
                                          const MeasureEvaluator& measures) {
  std::vector<std::string> names = {"population_deviation", "energy"};
  for (const auto& term : rules.group_share) {
    names.push_back("group_districts." + graph.count_column_name(term.column));
  }
  names.insert(names.end(), measures.scalar_names().begin(), measures.scalar_names().end());
  return names;
}

void compute_observables(const ChainState& state, MeasureEvaluator& measures, std::span<double> out,
                         std::span<double> sorted) {
  const Plan& plan = state.plan;
  const SplitTally& counties = state.rules.county_tally();
  const SplitTally& municipalities = state.rules.municipality_tally();
  measures.evaluate(plan, {counties.tracking() ? &counties : nullptr,
                           municipalities.tracking() ? &municipalities : nullptr});
  std::size_t i = 0;
  out[i++] = plan.max_population_deviation();
  out[i++] = state.rules.energy(plan);
  for (std::size_t t = 0; t < state.rules.group_term_count(); ++t) {
    out[i++] = static_cast<double>(state.rules.group_districts(t));
  }
  const auto scalars = measures.scalars();
  std::copy(scalars.begin(), scalars.end(), out.begin() + static_cast<std::ptrdiff_t>(i));
  assert(i + scalars.size() == out.size());
  const std::size_t k = measures.district_count();
  assert(sorted.size() == measures.vector_names().size() * k);
  for (std::size_t v = 0; v < measures.vector_names().size(); ++v) {
    const auto values = measures.sorted_vector(v);
    std::copy(values.begin(), values.end(), sorted.begin() + static_cast<std::ptrdiff_t>(v * k));
  }
}

std::string measures_json(const UnitGraph& graph, const RuleSet& rules, const MeasureEvaluator& measures,
                          const FewestSplits* fewest) {
  using json = nlohmann::ordered_json;
  const MeasureSpec& spec = measures.spec();
  json elections = json::array(), groups = json::array();
  for (const auto& e : spec.elections)
    elections.push_back({{"name", e.name}, {"party_a", e.party_a}, {"party_b", e.party_b},
                         {"votes_a", graph.count_column_name(e.votes_a)},
                         {"votes_b", graph.count_column_name(e.votes_b)}});
  for (const auto& g : spec.groups)
    groups.push_back({{"name", g.name}, {"column", graph.count_column_name(g.column)},
                      {"denominator", g.denominator ? json(graph.count_column_name(*g.denominator))
                                                    : json("total population")},
                      {"thresholds", g.thresholds}});
  json j;
  j["elections"] = elections;
  j["groups"] = groups;
  j["competitive"] = {spec.competitive_low, spec.competitive_high};
  j["county_splits"] = spec.county_splits;
  j["municipality_splits"] = spec.municipality_splits;
  j["scalars"] = measures.scalar_names();
  j["sorted"] = measures.vector_names();
  j["rules_read_group_columns"] = rules.reads_group_columns();
  j["reads_group_or_vote_columns"] = rules.reads_group_columns() || !spec.elections.empty() || !spec.groups.empty();
  if (fewest)
    j["county_splits_fewest"] = {{"cap", fewest->found}, {"lower_bound", fewest->lower_bound},
                                 {"proven", fewest->proven()}, {"attempts", fewest->attempts},
                                 {"valid_plans", fewest->valid_plans}, {"start_plans", fewest->plans.size()}};
  return j.dump();
}

}  // namespace planmill
