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
  return settings;
}

}  // namespace planmill
