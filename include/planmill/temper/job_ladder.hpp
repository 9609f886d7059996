#pragma once
// The job file's [tempering] words as ladders. Ladder l of a run is chain l of [sampler] turned
// into `rungs` replicas: replica i is chain index l * rungs + i (its own stream), and the swap
// stream is (run seed, ladder_stream_key(l)).
#include "planmill/job/job.hpp"
#include "planmill/temper/ladder.hpp"

namespace planmill {

// The listed betas, or the geometric ladder from sampler.beta down to hottest_beta.
[[nodiscard]] std::vector<double> ladder_betas(const JobSpec& job);

// The setup of ladder `ladder_index` (0 .. sampler.chains - 1). The job must have tempering.
[[nodiscard]] LadderSetup make_ladder_setup(const JobSpec& job, const GraphHandle& graph,
                                            const RuleSet& rules, std::uint64_t ladder_index);

}  // namespace planmill
