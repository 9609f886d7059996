#include "planmill/enumerate/enumerate.hpp"

#include <algorithm>
#include <stdexcept>
#include <vector>

namespace planmill {
namespace {

// Districts are built one at a time, each grown from the smallest unit not yet assigned, so
// labels come out canonical and no plan is reached twice. Growing enumerates the connected sets
// containing that unit exactly once each: candidates are queued in a fixed order, and every
// candidate is either taken or excluded for good (it stays marked, so it is never queued again
// in this district). After a district is complete, the unassigned units must split into
// components that the remaining districts can fill within the population bounds.
class Enumerator {
 public:
  Enumerator(const UnitGraph& graph, std::size_t k, std::int64_t pop_min, std::int64_t pop_max,
             const std::function<void(std::span<const DistrictIndex>)>& visit)
      : g_(graph), k_(k), min_(pop_min), max_(pop_max), visit_(visit), n_(graph.unit_count()),
        district_(n_, kNoDistrict), mark_(n_, 0), seen_(n_, 0), queue_(n_),
        candidates_(n_ * k + 1), previous_mark_(n_ * k + 1) {}

  void run() {
    if (n_ == 0 || min_ > max_) return;
    if (remainder_feasible(k_)) place(0, 0);
  }

 private:
  // Districts 0..level-1 are fixed and the unassigned units can hold k - level districts.
  void place(DistrictIndex level, std::size_t base) {
    if (static_cast<std::size_t>(level) + 1 == k_) {  // the check found the rest to be one district
      for (UnitIndex u = 0; u < n_; ++u)
        if (district_[u] == kNoDistrict) district_[u] = level;
      visit_(district_);
      for (UnitIndex u = 0; u < n_; ++u)
        if (district_[u] == level) district_[u] = kNoDistrict;
      return;
    }
    UnitIndex root = 0;
    while (district_[root] != kNoDistrict) ++root;
    take(root, level);
    const std::size_t end = queue_neighbors(root, level, base);
    grow(level, g_.population(root), base, end);
    unqueue(base, end);
    untake(root);
  }

  // The district `level` holds population `pop`; candidates_[next, end) are still undecided.
  void grow(DistrictIndex level, std::int64_t pop, std::size_t next, std::size_t end) {
    if (next == end) {
      if (pop >= min_ && remainder_feasible(k_ - level - 1)) place(level + 1, end);
      return;
    }
    const UnitIndex v = candidates_[next];
    if (pop + g_.population(v) <= max_) {  // take v
      take(v, level);
      const std::size_t new_end = queue_neighbors(v, level, end);
      grow(level, pop + g_.population(v), next + 1, new_end);
      unqueue(end, new_end);
      untake(v);
    }
    grow(level, pop, next + 1, end);  // exclude v (it stays marked)
  }

  void take(UnitIndex u, DistrictIndex level) {
    district_[u] = level;
    ++assigned_units_;
  }
  void untake(UnitIndex u) {
    district_[u] = kNoDistrict;
    --assigned_units_;
  }

  // Queues the unassigned neighbours of u not yet seen by district `level`, from slot `end`.
  std::size_t queue_neighbors(UnitIndex u, DistrictIndex level, std::size_t end) {
    const std::uint32_t tag = static_cast<std::uint32_t>(level) + 1;
    for (UnitIndex w : g_.neighbors(u)) {
      if (district_[w] != kNoDistrict || mark_[w] == tag) continue;
      previous_mark_[end] = mark_[w];
      mark_[w] = tag;
      candidates_[end++] = w;
    }
    return end;
  }
  void unqueue(std::size_t begin, std::size_t end) {
    for (std::size_t i = end; i-- > begin;) mark_[candidates_[i]] = previous_mark_[i];
  }

  // Can the unassigned units form exactly `left` connected districts within the bounds? A
  // component of population P holds between max(1, ceil(P / max)) and min(units, floor(P / min))
  // districts; the counts reachable by all components together form an interval.
  bool remainder_feasible(std::size_t left) {
    if (assigned_units_ == n_) return left == 0;
    if (left == 0) return false;
    if (++epoch_ == 0) {
      std::fill(seen_.begin(), seen_.end(), 0U);
      epoch_ = 1;
    }
    std::size_t low_sum = 0, high_sum = 0;
    for (UnitIndex s = 0; s < n_; ++s) {
      if (district_[s] != kNoDistrict || seen_[s] == epoch_) continue;
      std::size_t head = 0, tail = 0;
      queue_[tail++] = s;
      seen_[s] = epoch_;
      std::int64_t pop = 0;
      while (head < tail) {
        const UnitIndex u = queue_[head++];
        pop += g_.population(u);
        for (UnitIndex w : g_.neighbors(u))
          if (district_[w] == kNoDistrict && seen_[w] != epoch_) {
            seen_[w] = epoch_;
            queue_[tail++] = w;
          }
      }
      if (max_ <= 0 && pop > 0) return false;
      const std::size_t by_max = max_ <= 0 ? 1 : static_cast<std::size_t>((pop + max_ - 1) / max_);
      const std::size_t by_min = min_ <= 0 ? tail : static_cast<std::size_t>(pop / min_);
      const std::size_t low = std::max<std::size_t>(1, by_max), high = std::min(tail, by_min);
      if (low > high) return false;
      low_sum += low;
      high_sum += high;
      if (low_sum > left) return false;
    }
    return left <= high_sum;
  }

  const UnitGraph& g_;
  std::size_t k_;
  std::int64_t min_, max_;
  const std::function<void(std::span<const DistrictIndex>)>& visit_;
  std::size_t n_;
  std::vector<DistrictIndex> district_;
  std::vector<std::uint32_t> mark_;  // level + 1 of the district that queued the unit, 0 = none
  std::vector<std::uint32_t> seen_;
  std::uint32_t epoch_ = 0;
  std::vector<UnitIndex> queue_;
  // Candidate queues of the districts being grown, stacked one after another.
  std::vector<UnitIndex> candidates_;
  std::vector<std::uint32_t> previous_mark_;
  std::size_t assigned_units_ = 0;
};

}  // namespace

void for_each_plan(const UnitGraph& graph, std::size_t k, std::int64_t pop_min,
                   std::int64_t pop_max,
                   const std::function<void(std::span<const DistrictIndex>)>& visit) {
  if (k == 0 || k >= kNoDistrict) throw std::invalid_argument("district count out of range");
  Enumerator(graph, k, pop_min, pop_max, visit).run();
}

std::size_t count_plans(const UnitGraph& graph, std::size_t k, std::int64_t pop_min,
                        std::int64_t pop_max) {
  std::size_t count = 0;
  for_each_plan(graph, k, pop_min, pop_max, [&count](std::span<const DistrictIndex>) { ++count; });
  return count;
}

}  // namespace planmill
