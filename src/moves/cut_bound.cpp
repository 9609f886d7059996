#include "planmill/moves/cut_bound.hpp"

#include <algorithm>
#include <functional>

namespace planmill {

std::size_t balanced_edge_bound(std::span<const std::int64_t> population, std::int64_t lo, std::int64_t hi,
                                std::vector<std::int64_t>& scratch) {
  const std::size_t n = population.size();
  const std::size_t fallback = n > 1 ? n - 1 : 1;
  std::int64_t total = 0;
  for (const std::int64_t p : population) total += p;
  // Three disjoint far sides of lo each must fit in U, else the balanced edges lie on one path.
  if (lo <= 0 || 3 * lo <= total) return fallback;
  const std::int64_t width = std::min(hi, total - lo) - std::max(lo, total - hi);
  if (width < 0) return 1;  // no side can be balanced; 1 keeps the draw of a cut well defined
  scratch.clear();
  std::size_t zeros = 0;
  for (const std::int64_t p : population) {
    if (p == 0)
      ++zeros;
    else
      scratch.push_back(p);
  }
  // A min-heap: O(|U|) to build, then one pop per unit counted in g (few: w is a small share of P).
  std::make_heap(scratch.begin(), scratch.end(), std::greater<>());
  std::size_t g = 0;
  std::int64_t sum = 0;
  for (auto end = scratch.end(); end != scratch.begin(); --end) {
    sum += scratch.front();
    if (sum > width) break;
    ++g;
    std::pop_heap(scratch.begin(), end, std::greater<>());
  }
  return std::min(fallback, 1 + zeros + g);
}

}  // namespace planmill
