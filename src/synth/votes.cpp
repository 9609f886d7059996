// Votes per unit for one contest, its intercept set by bisection (synth/votes.hpp).
#include "synth/votes.hpp"

#include <algorithm>
#include <cmath>
#include <cstddef>

#include "synth/model.hpp"

namespace planmill::synth {

Votes vote(const std::vector<std::int64_t>& voters, const std::vector<double>& urban,
           const std::vector<double>& group, const std::vector<double>& swing, double urban_pull,
           double group_pull, Rng& rng, double target) {
  const std::size_t n = voters.size();
  std::vector<double> noise(n);
  for (double& z : noise) z = 0.035 * standard_normal(rng);
  const auto share = [&](double intercept, std::size_t u) {
    const double s = intercept + urban_pull * urban[u] + group_pull * group[u] +
                     0.12 * (swing[u] - 0.5) + noise[u];
    return std::clamp(s, 0.04, 0.96);
  };
  const auto statewide = [&](double intercept) {
    double a = 0.0, total = 0.0;
    for (std::size_t u = 0; u < n; ++u) {
      a += static_cast<double>(voters[u]) * share(intercept, u);
      total += static_cast<double>(voters[u]);
    }
    return total > 0.0 ? a / total : 0.5;
  };
  double low = -1.0, high = 1.0;
  for (int iteration = 0; iteration < 60; ++iteration) {
    const double mid = 0.5 * (low + high);
    (statewide(mid) < target ? low : high) = mid;
  }
  Votes votes;
  votes.a.resize(n);
  votes.b.resize(n);
  std::int64_t sum_a = 0, sum_all = 0;
  for (std::size_t u = 0; u < n; ++u) {
    votes.a[u] =
        static_cast<std::int64_t>(std::floor(static_cast<double>(voters[u]) * share(low, u) + 0.5));
    votes.b[u] = voters[u] - votes.a[u];
    sum_a += votes.a[u];
    sum_all += voters[u];
  }
  votes.share_a = sum_all > 0 ? static_cast<double>(sum_a) / static_cast<double>(sum_all) : 0.0;
  return votes;
}

}  // namespace planmill::synth
