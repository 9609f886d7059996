// Plan's list of moved units: it holds every unit whose label differs from a snapshot taken at
// clear_changes() (checked by comparing every label, the direct definition), it overflows instead
// of growing, wholesale replacement marks it overflowed, and keeping it allocates nothing.
#include <gtest/gtest.h>

#include <algorithm>
#include <atomic>
#include <cstdlib>
#include <new>
#include <set>

#include "planmill/base/random.hpp"
#include "planmill/plan/plan.hpp"
#include "count_allocations.hpp"
#include "small_graphs.hpp"



namespace planmill {
namespace {

std::set<UnitIndex> differing_units(const Plan& plan, const std::vector<DistrictIndex>& before) {
  std::set<UnitIndex> units;
  for (UnitIndex u = 0; u < plan.unit_count(); ++u)
    if (plan.district_of(u) != before[u]) units.insert(u);
  return units;
}

TEST(PlanChanges, ListCoversEveryChangedUnitUntilItOverflows) {
  const GraphHandle g_handle = share_graph(test::grid(40, 40));  // 1,600 units: room for 400 moves
  constexpr std::size_t k = 5;
  Plan plan(g_handle, k, test::stripe_assignment(40, 40, k));
  EXPECT_TRUE(plan.changes().overflowed);  // nothing is known about earlier copies
  ASSERT_EQ(plan.change_capacity(), 400u);
  Rng rng = make_stream(31, 0);
  std::size_t complete_rounds = 0, overflowed_rounds = 0;
  for (int round = 0; round < 60; ++round) {
    plan.clear_changes();
    EXPECT_FALSE(plan.changes().overflowed);
    EXPECT_TRUE(plan.changes().units.empty());
    const std::vector<DistrictIndex> before(plan.assignment().begin(), plan.assignment().end());
    // Rounds of 1 to 1,200 moves, some moving a unit back, so both sides of 400 real moves occur.
    const std::uint32_t moves = 1 + uniform_below(rng, 1200);
    std::size_t real_moves = 0;
    for (std::uint32_t i = 0; i < moves; ++i) {
      const UnitIndex u = uniform_below(rng, static_cast<std::uint32_t>(g_handle->unit_count()));
      const auto to = static_cast<DistrictIndex>(
          i % 3 == 2 ? before[u] : uniform_below(rng, static_cast<std::uint32_t>(k)));
      if (plan.district_of(u) != to) ++real_moves;
      plan.move(u, to);
    }
    const PlanChanges changes = plan.changes();
    const std::set<UnitIndex> listed(changes.units.begin(), changes.units.end());
    const std::set<UnitIndex> changed = differing_units(plan, before);
    if (real_moves <= plan.change_capacity()) {
      ++complete_rounds;
      ASSERT_FALSE(changes.overflowed) << round;
      EXPECT_EQ(changes.units.size(), real_moves);  // one entry per real move, repeats kept
      EXPECT_TRUE(std::includes(listed.begin(), listed.end(), changed.begin(), changed.end()));
    } else {
      ++overflowed_rounds;
      EXPECT_TRUE(changes.overflowed) << round;
      EXPECT_EQ(changes.units.size(), plan.change_capacity());
    }
  }
  EXPECT_GT(complete_rounds, 10u);
  EXPECT_GT(overflowed_rounds, 10u);
}

TEST(PlanChanges, MovingToTheSameDistrictIsNotListed) {
  const GraphHandle g_handle = share_graph(test::grid(4, 4));
  const UnitGraph& g = *g_handle;
  Plan plan(g_handle, 2, test::stripe_assignment(4, 4, 2));
  plan.clear_changes();
  plan.move(0, plan.district_of(0));
  EXPECT_TRUE(plan.changes().units.empty());
  const std::vector<UnitIndex> units = {0, 15, 0};
  const std::vector<DistrictIndex> to = {1, 0, 0};
  plan.assign(units, to);
  const auto listed = plan.changes().units;
  EXPECT_EQ(std::vector<UnitIndex>(listed.begin(), listed.end()), units);
}

TEST(PlanChanges, CopiesAndMovesAreOverflowed) {
  const GraphHandle g_handle = share_graph(test::grid(6, 6));
  const UnitGraph& g = *g_handle;
  Plan plan(g_handle, 3, test::stripe_assignment(6, 6, 3));
  plan.clear_changes();
  plan.move(0, 2);
  Plan copy(plan);
  EXPECT_TRUE(copy.changes().overflowed);
  EXPECT_FALSE(plan.changes().overflowed);
  copy.clear_changes();
  copy = plan;
  EXPECT_TRUE(copy.changes().overflowed);
  copy.clear_changes();
  copy = Plan(g_handle, 3, test::stripe_assignment(6, 6, 3));
  EXPECT_TRUE(copy.changes().overflowed);
  Plan moved(std::move(copy));
  EXPECT_TRUE(moved.changes().overflowed);
  EXPECT_EQ(moved.change_capacity(), 256u);  // the list moved along, still able to record
  moved.clear_changes();
  moved.move(1, 2);
  EXPECT_EQ(moved.changes().units.size(), 1u);
  // A moved-from plan given new labels gets a list again.
  copy = moved;
  EXPECT_GE(copy.change_capacity(), 256u);
  EXPECT_TRUE(copy.tallies_consistent());
}

TEST(PlanChanges, KeepingTheListAllocatesNothing) {
  const GraphHandle g_handle = share_graph(test::grid(30, 30));
  const UnitGraph& g = *g_handle;
  constexpr std::size_t k = 4;
  Plan plan(g_handle, k, test::stripe_assignment(30, 30, k));
  Plan other(plan);
  Rng rng = make_stream(8, 0);
  std::vector<UnitIndex> units(50);
  std::vector<DistrictIndex> to(50);
  const std::size_t before = planmill::test::allocations();
  for (int round = 0; round < 200; ++round) {
    plan.clear_changes();
    // Enough moves to overflow now and then (capacity 256).
    for (int i = 0; i < 200; ++i)
      plan.move(uniform_below(rng, 900), static_cast<DistrictIndex>(uniform_below(rng, k)));
    for (std::size_t i = 0; i < units.size(); ++i) {
      units[i] = uniform_below(rng, 900);
      to[i] = static_cast<DistrictIndex>(uniform_below(rng, k));
    }
    plan.assign(units, to);
    other = plan;  // same shape: reuses capacity
  }
  EXPECT_EQ(planmill::test::allocations() - before, 0u);
  EXPECT_TRUE(plan.tallies_consistent());
}

}  // namespace
}  // namespace planmill
