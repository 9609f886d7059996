#pragma once
// The small map of the hard-limit tests (tests/rules/limits_test.cpp, tests/selftest/rules_law_test.cpp):
// a 3x4 grid of unequal populations (total 24, ideal 8 for three districts), two counties of 3x2
// (columns 0-1 and 2-3), three towns m0 {0,1,4,5}, m1 {2,3,6,7}, m2 {9,10} (units 8 and 11 in
// none), and one group column "grp".
#include "planmill/graph/unit_graph.hpp"
#include "small_graphs.hpp"

namespace planmill::test {

inline GraphHandle limits_map() {
  GraphExtras x;
  x.population = {2, 1, 3, 1, 1, 2, 2, 3, 3, 1, 1, 4};
  x.county = block_codes(3, 4, 3, 2);
  x.municipality = {0, 0, 1, 1, 0, 0, 1, 1, UnitCodes::kNone, 2, 2, UnitCodes::kNone};
  x.counts = {{"grp", {2, 0, 0, 1, 1, 2, 0, 0, 3, 1, 0, 0}}};
  x.groups = {0};
  return share_graph(grid(3, 4, x));
}

}  // namespace planmill::test
