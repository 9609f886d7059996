// The 6x6 grid into 6 connected pieces of 6 cells: 451206 (OEIS A172477).
#include <gtest/gtest.h>

#include "planmill/enumerate/enumerate.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

TEST(EnumerateSlow, SixBySixIntoSixMatchesOeisA172477) {
  const UnitGraph g = test::grid(6, 6);
  EXPECT_EQ(count_plans(g, 6, 6, 6), 451206U);
}

}  // namespace
}  // namespace planmill
