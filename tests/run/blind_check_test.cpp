// The pieces of the blind check (run/blind_check.hpp): the permutation is one cycle through every
// unit, drawn again from the seed alone, and the permuted map differs from the map only in the
// count columns named.
#include <gtest/gtest.h>

#include <map>
#include <set>
#include <vector>

#include "planmill/run/blind_check.hpp"
#include "../support/small_graphs.hpp"

namespace planmill {
namespace {

TEST(BlindPermutation, IsOneCycleThroughEveryUnitAndDependsOnlyOnTheSeed) {
  for (const std::size_t n : {2U, 3U, 7U, 200U}) {
    const auto p = blind_permutation(11, n);
    ASSERT_EQ(p.size(), n);
    EXPECT_EQ(std::set<UnitIndex>(p.begin(), p.end()).size(), n);  // a permutation
    // Following u -> p[u] from 0 returns to 0 after exactly n steps: a single n-cycle, so no
    // unit keeps its own values (Sattolo's algorithm draws only such permutations).
    std::size_t length = 0;
    UnitIndex u = 0;
    do {
      u = p[u];
      ++length;
    } while (u != 0 && length <= n);
    EXPECT_EQ(length, n);
    EXPECT_EQ(blind_permutation(11, n), p);
  }
  EXPECT_NE(blind_permutation(11, 200), blind_permutation(12, 200));
}

TEST(BlindPermutation, DrawsEveryCycleOfFourUnitsAboutEquallyOften) {
  // There are (4 - 1)! = 6 cycles through 4 units; Sattolo draws each with probability 1/6. Over
  // 6000 seeds each is expected 1000 times, sd about 29: 850..1150 is over 5 sd wide.
  std::map<std::vector<UnitIndex>, int> seen;
  for (std::uint64_t seed = 0; seed < 6000; ++seed) ++seen[blind_permutation(seed, 4)];
  EXPECT_EQ(seen.size(), 6U);
  for (const auto& [p, count] : seen) {
    EXPECT_GT(count, 850);
    EXPECT_LT(count, 1150);
  }
}

TEST(WithCountsPermuted, MovesTheNamedColumnsOnlyAndKeepsEverythingElse) {
  test::GraphExtras extras;
  extras.population = {5, 6, 7, 8, 9, 10};
  extras.county = {0, 0, 1, 1, 2, 2};
  extras.municipality = {0, UnitCodes::kNone, 1, 1, 2, 2};
  extras.area = {1, 2, 3, 4, 5, 6};
  extras.counts = {{"grp", {10, 11, 12, 13, 14, 15}},
                   {"votes_a", {20, 21, 22, 23, 24, 25}},
                   {"other", {30, 31, 32, 33, 34, 35}}};
  extras.groups = {0};
  const UnitGraph map = test::grid(2, 3, extras);
  const std::vector<UnitIndex> source = {1, 2, 3, 4, 5, 0};
  const std::vector<std::size_t> columns = {0, 1};
  const UnitGraph p = map.with_counts_permuted(columns, source);
  ASSERT_EQ(p.unit_count(), map.unit_count());
  ASSERT_EQ(p.edge_count(), map.edge_count());
  for (UnitIndex u = 0; u < map.unit_count(); ++u) {
    EXPECT_EQ(p.unit_id(u), map.unit_id(u));
    EXPECT_EQ(p.population(u), map.population(u));
    EXPECT_EQ(p.counties().code[u], map.counties().code[u]);
    EXPECT_EQ(p.municipalities().code[u], map.municipalities().code[u]);
    EXPECT_EQ(p.area(u), map.area(u));
    EXPECT_EQ(p.count_column(0)[u], map.count_column(0)[source[u]]);
    EXPECT_EQ(p.count_column(1)[u], map.count_column(1)[source[u]]);
    EXPECT_EQ(p.count_column(2)[u], map.count_column(2)[u]);  // not named: left alone
    ASSERT_EQ(p.degree(u), map.degree(u));
    for (std::size_t i = 0; i < map.degree(u); ++i) {
      EXPECT_EQ(p.neighbors(u)[i], map.neighbors(u)[i]);
      EXPECT_EQ(p.incident_edges(u)[i], map.incident_edges(u)[i]);
    }
  }
  EXPECT_EQ(p.total_population(), map.total_population());
  EXPECT_EQ(p.group_columns(), map.group_columns());
  EXPECT_THROW((void)map.with_counts_permuted(columns, std::vector<UnitIndex>{0, 0, 1, 2, 3, 4}),
               std::invalid_argument);
  EXPECT_THROW((void)map.with_counts_permuted(std::vector<std::size_t>{3}, source), std::invalid_argument);
}

}  // namespace
}  // namespace planmill
