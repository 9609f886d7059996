// Placement: every rank gets floor or ceil of N/P replicas, each rank's replicas are contiguous,
// ladders stay whole when the ladder count is a multiple of the rank count.
#include "planmill/run/placement.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <map>

namespace planmill {
namespace {

TEST(Placement, ChainsGoRoundTheRanks) {
  EXPECT_EQ(chain_rank(0, 3), 0);
  EXPECT_EQ(chain_rank(4, 3), 1);
  EXPECT_EQ(chain_rank(5, 1), 0);
}

TEST(Placement, ReplicasInBalancedContiguousBlocks) {
  for (std::uint64_t ladders = 1; ladders <= 6; ++ladders) {
    for (std::uint64_t rungs = 2; rungs <= 5; ++rungs) {
      for (int ranks = 1; ranks <= 9; ++ranks) {
        const std::uint64_t n = ladders * rungs;
        std::map<int, std::uint64_t> load;
        int previous = 0;
        for (std::uint64_t l = 0; l < ladders; ++l) {
          for (std::uint64_t i = 0; i < rungs; ++i) {
            const int r = replica_rank(l, i, ladders, rungs, ranks);
            ASSERT_GE(r, previous) << "blocks are contiguous and in rank order";
            ASSERT_LT(r, ranks);
            previous = r;
            ++load[r];
          }
        }
        const std::uint64_t low = n / static_cast<std::uint64_t>(ranks);
        for (const auto& [rank, count] : load) {
          EXPECT_TRUE(count == low || count == low + 1) << ladders << " " << rungs << " " << ranks;
        }
        if (n >= static_cast<std::uint64_t>(ranks)) EXPECT_EQ(load.size(), std::size_t(ranks));
        if (ladders % static_cast<std::uint64_t>(ranks) == 0) {
          for (std::uint64_t l = 0; l < ladders; ++l) {
            const auto where = ladder_ranks(l, ladders, rungs, ranks);
            EXPECT_EQ(std::count(where.begin(), where.end(), where.front()),
                      static_cast<long>(rungs))
                << "ladder " << l << " stays whole";
          }
        }
      }
    }
  }
}

TEST(Placement, OneLadderOverAsManyRanksAsRungs) {
  const auto where = ladder_ranks(0, 1, 4, 4);
  EXPECT_EQ(where, (std::vector<int>{0, 1, 2, 3}));
  const auto shared = ladder_ranks(1, 3, 4, 2);  // 12 replicas on 2 ranks: ladder 1 is cut
  EXPECT_EQ(shared, (std::vector<int>{0, 0, 1, 1}));
}

}  // namespace
}  // namespace planmill
