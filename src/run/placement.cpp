#include "planmill/run/placement.hpp"

namespace planmill {

int chain_rank(std::uint64_t chain, int ranks) {
  return static_cast<int>(chain % static_cast<std::uint64_t>(ranks));
}

int replica_rank(std::uint64_t ladder, std::uint64_t replica, std::uint64_t ladders,
                 std::uint64_t rungs, int ranks) {
  // Block b = floor(g P / N) of replica g: block sizes are floor or ceil of N / P.
  const auto g = static_cast<unsigned __int128>(ladder * rungs + replica);
  const auto p = static_cast<unsigned __int128>(ranks);
  return static_cast<int>(g * p / (ladders * rungs));
}

std::vector<int> ladder_ranks(std::uint64_t ladder, std::uint64_t ladders, std::uint64_t rungs,
                              int ranks) {
  std::vector<int> out(rungs);
  for (std::uint64_t i = 0; i < rungs; ++i) out[i] = replica_rank(ladder, i, ladders, rungs, ranks);
  return out;
}

}  // namespace planmill
