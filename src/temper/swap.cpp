#include "planmill/temper/swap.hpp"

#include <cmath>
#include <utility>

namespace planmill {

std::size_t swap_round(const SwapRoundInput& input, std::span<double> energy_on_rung,
                       std::span<std::uint32_t> replica_on_rung, std::span<std::uint8_t> accepted,
                       Rng& rng) noexcept {
  const std::size_t rungs = input.betas.size();
  for (std::size_t r = 0; r + 1 < rungs; ++r) accepted[r] = 0;
  std::size_t proposed = 0;
  for (std::size_t r = first_pair_of_round(input.round); r + 1 < rungs; r += 2) {
    ++proposed;
    double log_ratio =
        (input.betas[r] - input.betas[r + 1]) * (energy_on_rung[r] - energy_on_rung[r + 1]);
    if (input.wrong_sign) log_ratio = -log_ratio;
    const double u = uniform01(rng);
    if (log_ratio >= 0.0 || u < std::exp(log_ratio)) {
      std::swap(energy_on_rung[r], energy_on_rung[r + 1]);
      std::swap(replica_on_rung[r], replica_on_rung[r + 1]);
      accepted[r] = 1;
    }
  }
  return proposed;
}

}  // namespace planmill
