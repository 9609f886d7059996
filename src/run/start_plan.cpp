#include "run/start_plan.hpp"

#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/seed/seed_plan.hpp"

namespace planmill::runner {
namespace {

// Seed plans draw from their own streams, apart from the chains' (keyed by the chain index) and
// the ladders' swap streams (temper/ladder.hpp: 2^62 + ladder index).
constexpr std::uint64_t kSeedPlanStreamBase = 3ULL << 61;

}  // namespace

Plan chain_start_plan(const JobSpec& job, const GraphHandle& graph, const std::optional<Plan>& given,
                      const RuleSet& rules, std::uint64_t run_seed, std::uint64_t chain_index,
                      const FewestSplits* fewest) {
  const auto on_graph = [&](const Plan& plan) {
    if (&plan.graph() == graph.get()) return plan;
    const auto labels = plan.assignment();
    return Plan(graph, plan.district_count(), std::vector<DistrictIndex>(labels.begin(), labels.end()));
  };
  const ChainStarts starts = job.starts;
  if (given && (starts == ChainStarts::given || (starts == ChainStarts::mixed && chain_index == 0)))
    return on_graph(*given);
  if (fewest && !fewest->plans.empty()) return on_graph(fewest->plans[chain_index % fewest->plans.size()]);
  Rng rng = make_stream(run_seed, kSeedPlanStreamBase + chain_index);
  return random_seed_plan(graph, job.districts, rules, rng);
}

}  // namespace planmill::runner
