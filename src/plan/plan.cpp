#include "planmill/plan/plan.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <string>

namespace planmill {

Plan::Plan(GraphHandle graph, std::size_t district_count, std::vector<DistrictIndex> district)
    : graph_(std::move(graph)), k_(district_count), district_(std::move(district)) {
  if (!graph_) throw std::invalid_argument("plan without a map");
  columns_ = graph_->count_column_count();
  if (k_ == 0 || k_ >= kNoDistrict) throw std::invalid_argument("district count out of range");
  if (district_.size() != graph_->unit_count())
    throw std::invalid_argument("plan has " + std::to_string(district_.size()) + " units, map has " +
                                std::to_string(graph_->unit_count()));
  for (DistrictIndex d : district_)
    if (d >= k_) throw std::invalid_argument("district label " + std::to_string(d) + " >= k");
  recompute();
  reserve_changes();
}

// Beyond about a quarter of the units, checking the listed units costs about as much as
// comparing every label, so a longer list would buy nothing.
void Plan::reserve_changes() {
  changes_.clear();
  changes_.reserve(std::max<std::size_t>(256, district_.size() / 4));
  changes_overflowed_ = true;
}

Plan::Plan(const Plan& other)
    : graph_(other.graph_),
      k_(other.k_),
      columns_(other.columns_),
      district_(other.district_),
      population_(other.population_),
      size_(other.size_),
      counts_(other.counts_),
      area_(other.area_),
      perimeter_(other.perimeter_),
      cut_edges_(other.cut_edges_) {
  reserve_changes();
}

Plan::Plan(Plan&& other) noexcept
    : graph_(other.graph_),  // copied, not moved: a moved-from plan still names its map
      k_(other.k_),
      columns_(other.columns_),
      district_(std::move(other.district_)),
      population_(std::move(other.population_)),
      size_(std::move(other.size_)),
      counts_(std::move(other.counts_)),
      area_(std::move(other.area_)),
      perimeter_(std::move(other.perimeter_)),
      cut_edges_(other.cut_edges_),
      changes_(std::move(other.changes_)),
      seen_(std::move(other.seen_)),
      seen_epoch_(other.seen_epoch_),
      queue_(std::move(other.queue_)) {
  changes_.clear();
  changes_overflowed_ = true;
}

Plan& Plan::operator=(Plan&& other) noexcept {
  if (this == &other) return *this;
  if (graph_ != other.graph_) graph_ = other.graph_;  // same map: no reference-count traffic
  k_ = other.k_;
  columns_ = other.columns_;
  district_ = std::move(other.district_);
  population_ = std::move(other.population_);
  size_ = std::move(other.size_);
  counts_ = std::move(other.counts_);
  area_ = std::move(other.area_);
  perimeter_ = std::move(other.perimeter_);
  cut_edges_ = other.cut_edges_;
  changes_ = std::move(other.changes_);
  changes_.clear();
  changes_overflowed_ = true;
  seen_ = std::move(other.seen_);
  seen_epoch_ = other.seen_epoch_;
  queue_ = std::move(other.queue_);
  return *this;
}

Plan& Plan::operator=(const Plan& other) {
  if (this == &other) return *this;
  if (graph_ != other.graph_) graph_ = other.graph_;  // same map: no reference-count traffic
  k_ = other.k_;
  columns_ = other.columns_;
  // assign() reuses capacity, so copying a plan of the same shape does not allocate.
  district_.assign(other.district_.begin(), other.district_.end());
  population_.assign(other.population_.begin(), other.population_.end());
  size_.assign(other.size_.begin(), other.size_.end());
  counts_.assign(other.counts_.begin(), other.counts_.end());
  area_.assign(other.area_.begin(), other.area_.end());
  perimeter_.assign(other.perimeter_.begin(), other.perimeter_.end());
  cut_edges_ = other.cut_edges_;
  if (changes_.capacity() == 0) reserve_changes();  // a moved-from plan lost its list
  changes_.clear();
  changes_overflowed_ = true;
  return *this;
}

void Plan::recompute() {
  population_.assign(k_, 0);
  size_.assign(k_, 0);
  counts_.assign(k_ * columns_, 0.0);
  area_.assign(k_, 0.0);
  perimeter_.assign(k_, 0.0);
  cut_edges_ = 0;
  const UnitGraph& g = *graph_;
  for (UnitIndex u = 0; u < unit_count(); ++u) {
    add_unit(u, district_[u], 1.0);
    if (g.has_outer_boundary()) perimeter_[district_[u]] += g.outer_boundary(u);
  }
  for (EdgeIndex e = 0; e < g.edge_count(); ++e) {
    const DistrictIndex a = district_[g.edge_first(e)], b = district_[g.edge_second(e)];
    if (a == b) continue;
    ++cut_edges_;
    if (g.has_edge_lengths()) {
      perimeter_[a] += g.edge_length(e);
      perimeter_[b] += g.edge_length(e);
    }
  }
}

void Plan::add_unit(UnitIndex u, DistrictIndex d, double sign) noexcept {
  const UnitGraph& g = *graph_;
  population_[d] += sign > 0 ? g.population(u) : -g.population(u);
  size_[d] = sign > 0 ? size_[d] + 1 : size_[d] - 1;
  double* tally = counts_.data() + static_cast<std::size_t>(d) * columns_;
  for (std::size_t c = 0; c < columns_; ++c) tally[c] += sign * g.count_column(c)[u];
  if (g.has_areas()) area_[d] += sign * g.area(u);
}

double Plan::ideal_population() const noexcept {
  return static_cast<double>(graph_->total_population()) / static_cast<double>(k_);
}

double Plan::max_population_deviation() const noexcept {
  const double ideal = ideal_population();
  double worst = 0.0;
  for (std::int64_t p : population_) worst = std::max(worst, std::abs(static_cast<double>(p) - ideal));
  return ideal > 0 ? worst / ideal : 0.0;
}

void Plan::move(UnitIndex u, DistrictIndex to) noexcept {
  const DistrictIndex from = district_[u];
  if (from == to) return;
  const UnitGraph& g = *graph_;
  add_unit(u, from, -1.0);
  add_unit(u, to, 1.0);
  const bool lengths = g.has_edge_lengths();
  const auto nbrs = g.neighbors(u);
  const auto edges = g.incident_edges(u);
  for (std::size_t i = 0; i < nbrs.size(); ++i) {
    const DistrictIndex w = district_[nbrs[i]];
    const double len = lengths ? g.edge_length(edges[i]) : 0.0;
    if (w == from) {  // was internal, now cut
      ++cut_edges_;
      perimeter_[from] += len;
      perimeter_[to] += len;
    } else if (w == to) {  // was cut, now internal
      --cut_edges_;
      perimeter_[from] -= len;
      perimeter_[to] -= len;
    } else {  // stays cut, changes side
      perimeter_[from] -= len;
      perimeter_[to] += len;
    }
  }
  if (g.has_outer_boundary()) {
    perimeter_[from] -= g.outer_boundary(u);
    perimeter_[to] += g.outer_boundary(u);
  }
  district_[u] = to;
  if (changes_.size() < changes_.capacity())
    changes_.push_back(u);
  else
    changes_overflowed_ = true;
}

void Plan::assign(std::span<const UnitIndex> units, std::span<const DistrictIndex> to) noexcept {
  for (std::size_t i = 0; i < units.size(); ++i) move(units[i], to[i]);
}

bool Plan::is_connected(DistrictIndex d) const {
  if (size_[d] == 0) return false;
  const UnitGraph& g = *graph_;
  if (seen_.size() != unit_count()) {
    seen_.assign(unit_count(), 0);
    seen_epoch_ = 0;
  }
  if (++seen_epoch_ == 0) {  // wrapped: clear marks once every 2^32 calls
    std::fill(seen_.begin(), seen_.end(), 0U);
    seen_epoch_ = 1;
  }
  UnitIndex start = 0;
  while (district_[start] != d) ++start;
  queue_.clear();
  queue_.push_back(start);
  seen_[start] = seen_epoch_;
  for (std::size_t head = 0; head < queue_.size(); ++head)
    for (UnitIndex v : g.neighbors(queue_[head]))
      if (district_[v] == d && seen_[v] != seen_epoch_) {
        seen_[v] = seen_epoch_;
        queue_.push_back(v);
      }
  return queue_.size() == size_[d];
}

bool Plan::is_connected_without(DistrictIndex d, UnitIndex left) const {
  if (size_[d] == 0) return false;
  const UnitGraph& g = *graph_;
  if (seen_.size() != unit_count()) {
    seen_.assign(unit_count(), 0);
    seen_epoch_ = 0;
  }
  if (seen_epoch_ >= UINT32_MAX - 2) {  // two epochs per call: clear before they wrap
    std::fill(seen_.begin(), seen_.end(), 0U);
    seen_epoch_ = 0;
  }
  const std::uint32_t target = ++seen_epoch_, reached = ++seen_epoch_;
  // Neighbours of `left` in d, marked as targets.
  std::size_t remaining = 0;
  UnitIndex start = 0;
  for (UnitIndex w : g.neighbors(left))
    if (district_[w] == d && seen_[w] != target) {
      if (remaining++ == 0) start = w;
      seen_[w] = target;
    }
  if (remaining == 0) return is_connected(d);  // not from a connected d; answer the long way
  queue_.clear();
  queue_.push_back(start);
  seen_[start] = reached;
  if (--remaining == 0) return true;
  for (std::size_t head = 0; head < queue_.size(); ++head)
    for (UnitIndex v : g.neighbors(queue_[head]))
      if (district_[v] == d && seen_[v] != reached) {
        if (seen_[v] == target && --remaining == 0) return true;
        seen_[v] = reached;
        queue_.push_back(v);
      }
  return false;
}

bool Plan::all_connected() const {
  for (DistrictIndex d = 0; d < k_; ++d)
    if (!is_connected(d)) return false;
  return true;
}

std::vector<DistrictPiece> Plan::pieces(DistrictIndex d) const {
  std::vector<DistrictPiece> found;
  if (size_[d] == 0) return found;
  const UnitGraph& g = *graph_;
  std::vector<std::uint8_t> seen(unit_count(), 0);
  std::vector<UnitIndex> queue;
  for (UnitIndex start = 0; start < unit_count(); ++start) {
    if (district_[start] != d || seen[start] != 0) continue;
    DistrictPiece piece;
    queue.assign(1, start);
    seen[start] = 1;
    for (std::size_t head = 0; head < queue.size(); ++head) {
      const UnitIndex u = queue[head];
      ++piece.units;
      piece.population += g.population(u);
      for (UnitIndex v : g.neighbors(u))
        if (district_[v] == d && seen[v] == 0) {
          seen[v] = 1;
          queue.push_back(v);
        }
    }
    found.push_back(piece);
  }
  std::stable_sort(found.begin(), found.end(), [](const DistrictPiece& a, const DistrictPiece& b) {
    return a.population != b.population ? a.population > b.population : a.units > b.units;
  });
  return found;
}

bool Plan::tallies_consistent() const {
  Plan fresh(graph_, k_, district_);
  auto close = [](double a, double b) { return std::abs(a - b) <= 1e-6 * (1.0 + std::abs(a) + std::abs(b)); };
  if (fresh.population_ != population_ || fresh.size_ != size_ || fresh.cut_edges_ != cut_edges_) return false;
  for (std::size_t i = 0; i < counts_.size(); ++i)
    if (!close(fresh.counts_[i], counts_[i])) return false;
  for (std::size_t d = 0; d < k_; ++d)
    if (!close(fresh.area_[d], area_[d]) || !close(fresh.perimeter_[d], perimeter_[d])) return false;
  return true;
}

}  // namespace planmill
