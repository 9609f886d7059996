#pragma once
// Which units a plan has moved since its consumer last looked (Plan::changes()), so that a
// consumer holding an older copy of the labels (the ensemble writer) need not compare them all.
#include <span>

#include "planmill/base/ids.hpp"

namespace planmill {

struct PlanChanges {
  // Units moved, in move order; a unit may appear more than once, and a unit moved back to its
  // old district still appears.
  std::span<const UnitIndex> units;
  // The list is not complete (it filled up, or the labels were replaced wholesale): every unit
  // may have changed.
  bool overflowed = true;
};

}  // namespace planmill
