#pragma once
// SplitTally: how a plan splits the counties (or municipalities) of its map, kept up to date as
// units move: the units of each code in each district, the districts meeting each code, and from
// them the codes split (meeting two or more districts) and the pieces (district-code pairs that
// share a unit), and the codes meeting more districts than a set limit (over_limit()). Units with
// the code UnitCodes::kNone (in no municipality) count nowhere.
// The rule tracker keeps one per kind of code for its chain; measures read them, or build their own.
#include <cstddef>
#include <cstdint>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/graph/unit_graph.hpp"
#include "planmill/plan/plan.hpp"

namespace planmill {

class SplitTally {
 public:
  SplitTally() = default;  // tracks nothing: no codes, nothing split
  // `codes` must belong to `graph` (its counties() or municipalities()); the tally holds the
  // graph so that they stay alive. Throws std::invalid_argument if there is not one code per unit.
  // Counts no unit until reset(plan).
  SplitTally(GraphHandle graph, std::size_t district_count, const UnitCodes& codes);
  // The same for plan.graph(), counted from the plan.
  SplitTally(const Plan& plan, const UnitCodes& codes);

  // Recounts from the plan's labels: O(units + codes * districts).
  void reset(const Plan& plan);
  // Unit u has just moved from `from` to `to` (plan.move did it or is about to). No allocation.
  void move(UnitIndex u, DistrictIndex from, DistrictIndex to) noexcept {
    if (code_ == nullptr) return;
    const std::uint32_t c = code_[u];
    if (c == UnitCodes::kNone) return;
    std::uint32_t& met = districts_met_[c];
    if (--units_[c * k_ + from] == 0) {
      --pieces_;
      if (met-- == over_at_) --over_;
      if (met == 1) --split_;
    }
    if (units_[c * k_ + to]++ == 0) {
      ++pieces_;
      if (++met == 2) ++split_;
      if (met == over_at_) ++over_;
    }
  }
  // From now on, over_limit() counts the codes meeting more than `districts` districts (>= 1).
  void set_district_limit(std::size_t districts) noexcept;

  [[nodiscard]] bool tracking() const noexcept { return code_ != nullptr; }
  [[nodiscard]] std::size_t code_count() const noexcept { return districts_met_.size(); }
  // Codes meeting two or more districts.
  [[nodiscard]] std::size_t split() const noexcept { return split_; }
  // Sum over codes of the districts each meets (an unsplit code is one piece).
  [[nodiscard]] std::size_t pieces() const noexcept { return pieces_; }
  [[nodiscard]] std::size_t districts_meeting(std::uint32_t code) const noexcept {
    return districts_met_[code];
  }
  // Codes meeting more districts than the limit of set_district_limit (0 while none is set).
  [[nodiscard]] std::size_t over_limit() const noexcept { return over_; }
  [[nodiscard]] std::size_t district_limit() const noexcept {
    return over_at_ == kNoLimit ? kNoLimit : static_cast<std::size_t>(over_at_ - 1);
  }
  static constexpr std::uint64_t kNoLimit = ~std::uint64_t{0};

 private:
  GraphHandle graph_;
  const std::uint32_t* code_ = nullptr;
  std::size_t k_ = 0;
  std::vector<std::uint32_t> units_;          // units of code c in district d at [c * k + d]
  std::vector<std::uint32_t> districts_met_;  // per code
  std::size_t split_ = 0;
  std::size_t pieces_ = 0;
  std::uint64_t over_at_ = kNoLimit;  // limit + 1: a code meeting this many districts is over
  std::size_t over_ = 0;
};

}  // namespace planmill
