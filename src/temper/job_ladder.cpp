#include "planmill/temper/job_ladder.hpp"

#include <stdexcept>

#include "planmill/job/kernel_settings.hpp"

namespace planmill {

std::vector<double> ladder_betas(const JobSpec& job) {
  const TemperingSpec& t = job.tempering;
  if (!t.enabled) throw std::invalid_argument("the job has no [tempering] section");
  if (!t.betas.empty()) return t.betas;
  return geometric_betas(job.sampler.beta, t.hottest_beta, t.rungs);
}

LadderSetup make_ladder_setup(const JobSpec& job, const GraphHandle& graph, const RuleSet& rules,
                              std::uint64_t ladder_index) {
  LadderSetup setup;
  setup.betas = ladder_betas(job);
  setup.chain = ChainSetup{graph, rules, make_kernel_settings(job), job.sampler.seed, 0};
  setup.ladder_index = ladder_index;
  setup.first_chain_index = ladder_index * setup.betas.size();
  setup.swap_every = job.tempering.swap_every;
  return setup;
}

}  // namespace planmill
