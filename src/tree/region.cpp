// Region construction: global->local map sized once per graph, only touched entries reset.
#include "planmill/tree/region.hpp"

#include <algorithm>
#include <stdexcept>

namespace planmill {

void Region::prepare_map(const UnitGraph& graph) {
  if (graph_ != &graph || local_.size() != graph.unit_count()) {
    local_.assign(graph.unit_count(), kNotInRegion);
    graph_ = &graph;
  } else {
    for (const UnitIndex u : global_) local_[u] = kNotInRegion;
  }
  global_.clear();
  known_connected_ = false;
}

void Region::build(const Plan& plan, DistrictIndex a, DistrictIndex b) {
  const UnitGraph& graph = plan.graph();
  prepare_map(graph);
  const std::span<const DistrictIndex> district = plan.assignment();
  for (UnitIndex u = 0; u < district.size(); ++u) {
    const DistrictIndex d = district[u];
    if (d == a || d == b) {
      local_[u] = static_cast<std::uint32_t>(global_.size());
      global_.push_back(u);
    }
  }
  fill_adjacency(graph);
}

void Region::build_from_seeds(const Plan& plan, UnitIndex seed_a, UnitIndex seed_b) {
  const UnitGraph& graph = plan.graph();
  prepare_map(graph);
  const DistrictIndex a = plan.district_of(seed_a), b = plan.district_of(seed_b);
  auto add = [&](UnitIndex u) {
    local_[u] = static_cast<std::uint32_t>(global_.size());
    global_.push_back(u);
  };
  offsets_.clear();
  adjacency_.clear();
  population_.clear();
  weight_.clear();
  total_population_ = 0;
  offsets_.push_back(0);
  const bool weighted = !tree_weights_.trivial();
  const std::span<const DistrictIndex> district = plan.assignment();
  add(seed_a);
  if (seed_b != seed_a) add(seed_b);
  // Breadth-first through units labelled a or b; global_ doubles as the queue. Each unit's
  // neighbours in the region are listed as it leaves the queue (every one has its local index by
  // then), so the CSR is the one fill_adjacency() would build, in one pass over the neighbours.
  for (std::size_t head = 0; head < global_.size(); ++head) {
    const UnitIndex u = global_[head];
    for (const UnitIndex w : graph.neighbors(u)) {
      std::uint32_t local = local_[w];
      if (local == kNotInRegion) {
        const DistrictIndex d = district[w];
        if (d != a && d != b) continue;
        local = static_cast<std::uint32_t>(global_.size());
        add(w);
      }
      adjacency_.push_back(local);
      if (weighted) weight_.push_back(tree_weights_.weight(graph, u, w));
    }
    offsets_.push_back(adjacency_.size());
    const std::int64_t pop = graph.population(u);
    population_.push_back(pop);
    total_population_ += pop;
  }
  // Every unit was reached from a seed, so the region is connected when the seeds (locals 0 and 1)
  // are one unit or neighbours.
  const std::span<const std::uint32_t> first = neighbors(0);
  known_connected_ = seed_b == seed_a || std::find(first.begin(), first.end(), 1U) != first.end();
}

void Region::build(const UnitGraph& graph, std::span<const UnitIndex> units) {
  prepare_map(graph);
  for (const UnitIndex u : units) {
    if (u >= graph.unit_count() || local_[u] != kNotInRegion) {
      for (const UnitIndex v : global_) local_[v] = kNotInRegion;
      global_.clear();
      throw std::invalid_argument("Region::build: unit index repeated or out of range");
    }
    local_[u] = static_cast<std::uint32_t>(global_.size());
    global_.push_back(u);
  }
  fill_adjacency(graph);
}

void Region::fill_adjacency(const UnitGraph& graph) {
  offsets_.clear();
  adjacency_.clear();
  population_.clear();
  weight_.clear();
  const bool weighted = !tree_weights_.trivial();
  total_population_ = 0;
  offsets_.push_back(0);
  for (const UnitIndex u : global_) {
    for (const UnitIndex w : graph.neighbors(u)) {
      const std::uint32_t local = local_[w];
      if (local == kNotInRegion) continue;
      adjacency_.push_back(local);
      if (weighted) weight_.push_back(tree_weights_.weight(graph, u, w));
    }
    offsets_.push_back(adjacency_.size());
    const std::int64_t pop = graph.population(u);
    population_.push_back(pop);
    total_population_ += pop;
  }
}

std::size_t Region::capacity_bytes() const noexcept {
  return local_.capacity() * sizeof(std::uint32_t) + global_.capacity() * sizeof(UnitIndex) +
         offsets_.capacity() * sizeof(AdjacencyView::Offset) +
         adjacency_.capacity() * sizeof(std::uint32_t) +
         population_.capacity() * sizeof(std::int64_t) + weight_.capacity() * sizeof(double);
}

}  // namespace planmill
