#pragma once
// A bound on the balanced edges of any spanning tree of a merged region U, a function of U's unit
// populations and the district bounds alone (so a merge-split move and its reverse share it).
// Proof and conditions: docs/kernels.md, "The default bound M".
#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

namespace planmill {

// At least the number of edges of any spanning tree of U (weighted or not) whose two sides both
// have population in [lo, hi]: 1 + z + g when 3·lo > pop(U) (z zero-population units, g the most
// of U's smallest positive populations summing to at most the width of the side interval),
// |U| − 1 otherwise; capped at |U| − 1 and never below 1. `scratch` is reused (no allocation once
// it has grown to |U|).
[[nodiscard]] std::size_t balanced_edge_bound(std::span<const std::int64_t> population, std::int64_t lo,
                                              std::int64_t hi, std::vector<std::int64_t>& scratch);

}  // namespace planmill
