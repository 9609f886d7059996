#pragma once
// Region: the subgraph induced by a set of units (one or two districts, or any unit list), stored
// as a local CSR adjacency over local indices 0..size()-1, walked through AdjacencyView.
// A Region is built again and again in a chain's hot loop: once its buffers have grown to the
// largest region seen, build() allocates nothing.
#include <cstdint>
#include <limits>
#include <span>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/graph/adjacency.hpp"
#include "planmill/graph/unit_graph.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/tree/tree_weights.hpp"

namespace planmill {

class Region {
 public:
  static constexpr std::uint32_t kNotInRegion = std::numeric_limits<std::uint32_t>::max();

  // The units of districts a and b (a == b: one district), local order = increasing unit index.
  // Scans the plan's assignment once, O(units of the graph); the rest is O(size + edges).
  void build(const Plan& plan, DistrictIndex a, DistrictIndex b);
  // The same region grown from one unit of each district (e.g. the ends of a cut edge; the two
  // may be equal), local order = breadth-first order. Costs O(size + edges of the region) only,
  // but reaches just the units connected to the seeds inside the two districts: for plans with
  // connected districts this is the whole pair.
  void build_from_seeds(const Plan& plan, UnitIndex seed_a, UnitIndex seed_b);
  // Whether the last build proved the region connected (build_from_seeds with equal or adjacent
  // seeds: every unit was reached from them); false says only "not proved".
  [[nodiscard]] bool known_connected() const noexcept { return known_connected_; }
  // The given units, local index i = units[i]. Throws std::invalid_argument on a repeated or
  // out-of-range unit.
  void build(const UnitGraph& graph, std::span<const UnitIndex> units);

  [[nodiscard]] std::uint32_t size() const noexcept {
    return static_cast<std::uint32_t>(global_.size());
  }
  // Each undirected edge inside the region counted once.
  [[nodiscard]] std::size_t edge_count() const noexcept { return adjacency_.size() / 2; }
  [[nodiscard]] UnitIndex global(std::uint32_t local) const noexcept { return global_[local]; }
  [[nodiscard]] std::span<const UnitIndex> units() const noexcept { return global_; }
  // Local index of a global unit, or kNotInRegion.
  [[nodiscard]] std::uint32_t local_of(UnitIndex unit) const noexcept { return local_[unit]; }

  // The adjacency over local indices (no edge ids).
  [[nodiscard]] AdjacencyView adjacency() const noexcept { return {offsets_, adjacency_}; }
  // Shorthands for adjacency().neighbors(local) and .degree(local).
  [[nodiscard]] std::span<const std::uint32_t> neighbors(std::uint32_t local) const noexcept {
    return adjacency().neighbors(local);
  }
  [[nodiscard]] std::uint32_t degree(std::uint32_t local) const noexcept {
    return adjacency().degree(local);
  }

  [[nodiscard]] std::int64_t population(std::uint32_t local) const noexcept {
    return population_[local];
  }
  [[nodiscard]] std::span<const std::int64_t> populations() const noexcept { return population_; }

  // Edge weights for the builds that follow (trees drawn and counted on the region use them).
  // With trivial weights (the default) weights() is empty and every edge weighs 1.
  void set_weights(const TreeWeights& weights) noexcept { tree_weights_ = weights; }
  [[nodiscard]] const TreeWeights& tree_weights() const noexcept { return tree_weights_; }
  // One weight per entry of adjacency().targets(), or empty when every edge weighs 1.
  [[nodiscard]] std::span<const double> weights() const noexcept { return weight_; }
  [[nodiscard]] std::int64_t total_population() const noexcept { return total_population_; }

  // Bytes reserved by the buffers (for tests that check nothing grows).
  [[nodiscard]] std::size_t capacity_bytes() const noexcept;

 private:
  void prepare_map(const UnitGraph& graph);
  void fill_adjacency(const UnitGraph& graph);

  const UnitGraph* graph_ = nullptr;
  std::vector<std::uint32_t> local_;  // per global unit; kNotInRegion outside the region
  std::vector<UnitIndex> global_;
  std::vector<AdjacencyView::Offset> offsets_;
  std::vector<std::uint32_t> adjacency_;
  std::vector<std::int64_t> population_;
  std::vector<double> weight_;
  TreeWeights tree_weights_;
  std::int64_t total_population_ = 0;
  bool known_connected_ = false;
};

}  // namespace planmill
