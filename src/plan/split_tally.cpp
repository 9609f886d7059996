#include "planmill/plan/split_tally.hpp"

#include <algorithm>
#include <stdexcept>
#include <string>
#include <utility>

namespace planmill {

SplitTally::SplitTally(GraphHandle graph, std::size_t district_count, const UnitCodes& codes)
    : graph_(std::move(graph)), code_(codes.code.data()), k_(district_count) {
  if (!graph_ || codes.code.size() != graph_->unit_count())
    throw std::invalid_argument("split tally: the codes are not one per unit of the map");
  std::size_t count = codes.names.size();
  for (const std::uint32_t c : codes.code)
    if (c != UnitCodes::kNone) count = std::max<std::size_t>(count, std::size_t{c} + 1);
  districts_met_.assign(count, 0);
  units_.assign(count * k_, 0);
}

SplitTally::SplitTally(const Plan& plan, const UnitCodes& codes)
    : SplitTally(plan.graph_handle(), plan.district_count(), codes) {
  reset(plan);
}

void SplitTally::reset(const Plan& plan) {
  if (code_ == nullptr) return;
  units_.assign(districts_met_.size() * k_, 0);
  std::fill(districts_met_.begin(), districts_met_.end(), 0U);
  split_ = pieces_ = over_ = 0;
  for (UnitIndex u = 0; u < plan.unit_count(); ++u) {
    const std::uint32_t c = code_[u];
    if (c == UnitCodes::kNone) continue;
    if (units_[c * k_ + plan.district_of(u)]++ == 0) {
      ++pieces_;
      if (++districts_met_[c] == 2) ++split_;
      if (districts_met_[c] == over_at_) ++over_;
    }
  }
}

void SplitTally::set_district_limit(std::size_t districts) noexcept {
  over_at_ = std::uint64_t{districts} + 1;
  over_ = 0;
  for (const std::uint32_t met : districts_met_) over_ += met >= over_at_ ? 1 : 0;
}

}  // namespace planmill
