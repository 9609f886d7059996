#pragma once
// One round of replica-exchange swaps between neighbouring rungs, as a pure function: rung betas,
// the energy of the replica on each rung and a random stream in; the new rung assignment out.
// It knows nothing of chains or plans, so a serial ladder and a ladder spread over ranks can share
// it (each rank sends its replicas' energies, one place runs the round, all get the assignment).
//
// Acceptance for rungs r, r+1 (Hukushima & Nemoto, J. Phys. Soc. Jpn. 65 (1996) 1604;
// docs/tempering.md): with E_r the energy of the replica now on rung r,
//   alpha = min{1, exp((b_r - b_{r+1}) (E_r - E_{r+1}))}.
// The tau^gamma factor of merge-split is the same on every rung and cancels.
//
// Which pairs: round n proposes the pairs (r, r+1) with r = n mod 2, 2 + n mod 2, ... (even pairs,
// then odd pairs, alternating). The pairs of one round are disjoint, so the round is a product of
// independent Metropolis moves, each in detailed balance with the joint law
// prod_r pi_{b_r}(replica on rung r); each round therefore leaves that law invariant, and so does
// any fixed sequence of rounds and chain steps. The alternation itself is not reversible, which
// is intended: it lets a replica keep moving in one direction and shortens round trips.
#include <cstdint>
#include <span>

#include "planmill/base/random.hpp"

namespace planmill {

struct SwapRoundInput {
  std::span<const double> betas;  // per rung, b_0 = target > b_1 > ... (at least 2 rungs)
  std::uint64_t round = 0;        // swap round number; its parity picks the pairs
  // For tests only: accept with exp(-(b_r - b_{r+1})(E_r - E_{r+1})), the wrong sign, so tests can
  // show that the exact check turns red.
  bool wrong_sign = false;
};

// Runs one round in place. energy_on_rung and replica_on_rung (both one entry per rung) move
// together when a swap is accepted; accepted[r] (one per pair, r = 0..R-2) is set to 1 for an
// accepted swap of pair (r, r+1), 0 otherwise (also for pairs not proposed this round).
// Draws exactly one uniform per proposed pair, whatever the outcome, so the stream's position
// depends only on the round numbers. Returns the number of proposed pairs. Allocates nothing.
std::size_t swap_round(const SwapRoundInput& input, std::span<double> energy_on_rung,
                       std::span<std::uint32_t> replica_on_rung, std::span<std::uint8_t> accepted,
                       Rng& rng) noexcept;

// The first pair proposed in round n (0 or 1), and whether pair r is proposed in round n.
[[nodiscard]] constexpr std::size_t first_pair_of_round(std::uint64_t round) noexcept {
  return static_cast<std::size_t>(round % 2);
}
[[nodiscard]] constexpr bool pair_proposed(std::size_t pair, std::uint64_t round) noexcept {
  return pair % 2 == first_pair_of_round(round);
}

}  // namespace planmill
