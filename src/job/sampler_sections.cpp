// [sampler] and [tempering] of the job file.
#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>

#include "job/job_file.hpp"

namespace planmill::job_file {

namespace fs = std::filesystem;

void read_sampler(Section& top, JobSpec& job) {
  const toml::table* table = top.table("sampler");
  if (!table) return;
  Section s(*table, "sampler", job.path);
  SamplerSpec& spec = job.sampler;
  const std::string kernel = s.string("kernel", "recombination");
  if (kernel == "recombination") spec.kernel = KernelKind::recombination;
  else if (kernel == "merge-split") spec.kernel = KernelKind::merge_split;
  else if (kernel == "flip") spec.kernel = KernelKind::flip;
  else s.fail("kernel", "unknown kernel '" + kernel + "'", "use \"recombination\", \"merge-split\" or \"flip\"");
  constexpr std::int64_t kMax = std::int64_t{1} << 50;
  spec.chains = static_cast<std::size_t>(s.integer("chains", 4, 1, 100'000));
  spec.steps = static_cast<std::uint64_t>(s.integer("steps", 1000, 1, kMax));
  spec.burn_in = static_cast<std::uint64_t>(s.integer("burn_in", 0, 0, kMax));
  spec.record_every = static_cast<std::uint64_t>(s.integer("record_every", 1, 1, kMax));
  spec.seed = static_cast<std::uint64_t>(s.integer("seed", 1, 0, std::numeric_limits<std::int64_t>::max()));
  spec.gamma = s.number("gamma", 0.0, 0.0, 10.0);
  spec.beta = s.number("beta", 1.0, 0.0, 1e6);
  spec.balanced_cut_bound = static_cast<std::size_t>(s.integer("balanced_cut_bound", 0, 0, 1'000'000));
  spec.tree_weight_county = s.number("tree_weight_county", 1.0, 1.0, 1e6);
  spec.tree_weight_municipality = s.number("tree_weight_municipality", 1.0, 1.0, 1e6);
  if (spec.kernel == KernelKind::flip)
    for (const char* key : {"tree_weight_county", "tree_weight_municipality"})
      if (s.has(key))
        s.fail(key, "the flip kernel draws no spanning trees, so it has no tree weights",
               "use kernel = \"recombination\" or \"merge-split\", or remove the key");
  if (spec.burn_in >= spec.steps)
    s.fail("burn_in", "burn_in (" + std::to_string(spec.burn_in) + ") must be below steps (" +
                          std::to_string(spec.steps) + ")", "lower burn_in or raise steps");
  s.reject_unknown();
}

void read_tempering(Section& top, JobSpec& job) {
  const toml::table* table = top.table("tempering");
  if (!table) return;
  Section t(*table, "tempering", job.path);
  TemperingSpec& spec = job.tempering;
  spec.enabled = true;
  const double target = job.sampler.beta;
  constexpr std::int64_t kMax = std::int64_t{1} << 50;
  spec.betas = t.numbers("betas");
  const bool listed = t.has("betas");
  if (listed) {
    if (t.has("rungs") || t.has("hottest_beta"))
      t.fail(t.has("rungs") ? "rungs" : "hottest_beta", "conflicts with tempering.betas",
             "give either betas = [...] or rungs and hottest_beta, not both");
    if (spec.betas.size() < 2 || spec.betas.size() > 64)
      t.fail("betas", "must list 2 to 64 rungs, has " + std::to_string(spec.betas.size()), "list 2 to 64 betas");
    for (std::size_t r = 0; r < spec.betas.size(); ++r) {
      if (!std::isfinite(spec.betas[r]) || spec.betas[r] < 0.0)
        t.fail("betas", "must hold finite numbers >= 0", "fix entry " + std::to_string(r + 1));
      if (r > 0 && !(spec.betas[r] < spec.betas[r - 1]))
        t.fail("betas", "must decrease strictly from the target rung", "fix entry " + std::to_string(r + 1));
    }
    if (spec.betas.front() != target) {
      std::ostringstream what;
      what << "starts at " << spec.betas.front() << ", but the target rung must have sampler.beta = " << target;
      t.fail("betas", what.str(), "make the first entry equal to sampler.beta");
    }
    spec.rungs = spec.betas.size();
  } else {
    spec.rungs = static_cast<std::size_t>(t.integer("rungs", 0, 2, 64, true));
    spec.hottest_beta = t.number("hottest_beta", 0.0, 0.0, 1e6, true);
    if (!(spec.hottest_beta > 0.0 && spec.hottest_beta < target)) {
      std::ostringstream what;
      what << "must lie strictly between 0 and the target sampler.beta = " << target << " for a geometric ladder";
      t.fail("hottest_beta", what.str(), "choose a smaller positive value, or list betas = [...] to reach 0");
    }
  }
  spec.swap_every = static_cast<std::uint64_t>(t.integer("swap_every", 10, 1, kMax));
  spec.tune = t.boolean("tune", false);
  if (spec.tune && job.sampler.burn_in == 0)
    t.fail("tune", "tuning runs during burn-in, but sampler.burn_in is 0", "set sampler.burn_in or tune = false");
  const std::string record = t.string("record", "target");
  if (record == "target") spec.record = TemperingRecord::target;
  else if (record == "all") spec.record = TemperingRecord::all;
  else t.fail("record", "unknown value '" + record + "'", "use \"target\" or \"all\"");
  if (job.sampler.kernel == KernelKind::recombination)
    top.fail("tempering", "tempering needs a kernel that weighs the energy by beta; recombination ignores beta",
             "set sampler.kernel to \"merge-split\" or \"flip\", or remove [tempering]");
  t.reject_unknown();
}

}  // namespace planmill::job_file
