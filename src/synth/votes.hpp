#pragma once
// The two elections of the invented state (votes.cpp). Private to src/synth.
#include <cstdint>
#include <vector>

#include "planmill/base/random.hpp"

namespace planmill::synth {

struct Votes {
  std::vector<std::int64_t> a, b;
  double share_a = 0.0;
};

// Party A's share rises with density and with the group's share; a regional swing field and
// per-unit noise vary it. The intercept is set by bisection so the statewide share hits target.
Votes vote(const std::vector<std::int64_t>& voters, const std::vector<double>& urban,
           const std::vector<double>& group, const std::vector<double>& swing, double urban_pull,
           double group_pull, Rng& rng, double target);

}  // namespace planmill::synth
