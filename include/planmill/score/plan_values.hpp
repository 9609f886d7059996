#pragma once
// One plan's value of every observable the runner records (run/observables.hpp: population
// deviation, energy, the rule terms and the job's [measures]), computed the way the runner does;
// `score` reports them and `compare` places them in the ensemble.
#include <map>
#include <string>
#include <vector>

#include "planmill/graph/unit_graph.hpp"
#include "planmill/measures/measures.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/rules/rules.hpp"

namespace planmill::score {

struct PlanValues {
  std::map<std::string, double> scalars;  // by observable name
  std::vector<std::string> scalar_order;  // the runner's order
  std::vector<std::string> vector_names;  // the sorted vectors, district_count() values each
  std::vector<std::vector<double>> vectors;
};

[[nodiscard]] PlanValues measure_plan(const Plan& plan, const GraphHandle& graph, const RuleSet& rules,
                                      const MeasureSpec& spec);

}  // namespace planmill::score
