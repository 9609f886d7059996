#include "planmill/score/plan_values.hpp"

#include <cstddef>

#include "planmill/moves/kernel.hpp"
#include "planmill/run/observables.hpp"

namespace planmill::score {

PlanValues measure_plan(const Plan& plan, const GraphHandle& graph, const RuleSet& rules,
                        const MeasureSpec& spec) {
  PlanValues v;
  // The same evaluator and observables the runner records (run/observables.hpp).
  MeasureEvaluator evaluator(graph, plan.district_count(), spec);
  const std::vector<std::string> observed = observable_names(*graph, rules, evaluator);
  std::vector<double> values(observed.size());
  std::vector<double> sorted(evaluator.vector_names().size() * plan.district_count());
  const ChainState state(plan, rules);
  compute_observables(state, evaluator, values, sorted);
  for (std::size_t i = 0; i < observed.size(); ++i) {
    if (v.scalars.emplace(observed[i], values[i]).second) v.scalar_order.push_back(observed[i]);
  }
  v.vector_names = evaluator.vector_names();
  const std::size_t k = plan.district_count();
  for (std::size_t i = 0; i < v.vector_names.size(); ++i)
    v.vectors.emplace_back(sorted.begin() + static_cast<std::ptrdiff_t>(i * k),
                           sorted.begin() + static_cast<std::ptrdiff_t>((i + 1) * k));
  return v;
}


}  // namespace planmill::score
