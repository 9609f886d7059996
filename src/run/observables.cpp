#include "planmill/run/observables.hpp"

#include <cassert>

namespace planmill {

std::vector<std::string> observable_names(const UnitGraph& graph, const RuleSet& rules) {
  std::vector<std::string> names = {"population_deviation", "cut_edges", "county_splits", "energy"};
  for (const auto& term : rules.group_share) {
    names.push_back("group_districts." + graph.count_column_name(term.column));
  }
  for (const auto& e : graph.elections()) {
    for (const auto& party : e.parties) names.push_back("seats." + e.name + "." + party);
  }
  return names;
}

void compute_observables(const UnitGraph& graph, const ChainState& state, std::span<double> out) {
  const Plan& plan = state.plan;
  std::size_t i = 0;
  out[i++] = plan.max_population_deviation();
  out[i++] = static_cast<double>(plan.cut_edge_count());
  out[i++] = static_cast<double>(state.rules.county_splits());
  out[i++] = state.rules.energy(plan);
  for (std::size_t t = 0; t < state.rules.group_term_count(); ++t) {
    out[i++] = static_cast<double>(state.rules.group_districts(t));
  }
  const auto k = static_cast<DistrictIndex>(plan.district_count());
  for (const auto& e : graph.elections()) {
    const std::size_t first = i;
    for (std::size_t p = 0; p < e.parties.size(); ++p) out[i++] = 0;
    for (DistrictIndex d = 0; d < k; ++d) {
      std::size_t best = 0;
      double best_votes = plan.count(d, e.columns[0]);
      bool tie = false;
      for (std::size_t p = 1; p < e.columns.size(); ++p) {
        const double v = plan.count(d, e.columns[p]);
        if (v > best_votes) {
          best = p, best_votes = v, tie = false;
        } else if (v == best_votes) {
          tie = true;
        }
      }
      if (!tie) out[first + best] += 1;
    }
  }
  assert(i == out.size());
}

}  // namespace planmill
