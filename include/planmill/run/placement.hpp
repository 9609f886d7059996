#pragma once
// Which rank runs what. Results never depend on it: every chain, replica and swap stream is keyed
// by its index, not by its rank.
//
// Plain chains: chain c on rank c mod P.
// Ladders: the L*R replicas in order (ladder 0's replicas 0..R-1, then ladder 1's, ...) are cut
// into P contiguous blocks whose sizes differ by at most one. A ladder stays on one rank when the
// counts allow it (L a multiple of P) and is shared by neighbouring ranks otherwise, so every
// rank steps about the same number of replicas. Ranks beyond L*R hold nothing.
#include <cstdint>
#include <vector>

namespace planmill {

[[nodiscard]] int chain_rank(std::uint64_t chain, int ranks);
[[nodiscard]] int replica_rank(std::uint64_t ladder, std::uint64_t replica, std::uint64_t ladders,
                               std::uint64_t rungs, int ranks);
// Per replica of `ladder`, its rank.
[[nodiscard]] std::vector<int> ladder_ranks(std::uint64_t ladder, std::uint64_t ladders,
                                            std::uint64_t rungs, int ranks);

}  // namespace planmill
