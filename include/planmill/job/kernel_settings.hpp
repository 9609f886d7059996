#pragma once
// The job file's [sampler] words as the settings a kernel takes.
#include "planmill/job/job.hpp"
#include "planmill/moves/kernel.hpp"

namespace planmill {

[[nodiscard]] inline KernelSettings make_kernel_settings(const JobSpec& job) {
  KernelSettings settings;
  settings.kind = job.sampler.kernel;
  settings.gamma = job.sampler.gamma;
  settings.beta = job.sampler.beta;
  settings.balanced_cut_bound = job.sampler.balanced_cut_bound;
  settings.county_tree_weight = job.sampler.tree_weight_county;
  settings.municipality_tree_weight = job.sampler.tree_weight_municipality;
  if (!job.frozen.empty()) {
    settings.frozen.assign(job.districts, 0);
    for (const std::size_t d : job.frozen) settings.frozen[d - 1] = 1;
  }
  return settings;
}

}  // namespace planmill
