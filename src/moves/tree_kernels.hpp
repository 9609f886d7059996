#pragma once
// Spanning-tree recombination and merge-split share one proposal: merge the two districts at a
// uniformly chosen cut edge, draw a uniform spanning tree, cut a balanced edge.
#include <vector>

#include "planmill/moves/kernel.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/spanning_tree.hpp"
#include "planmill/tree/tree_count.hpp"

namespace planmill {

class TreeProposal {
 public:
  TreeProposal(const KernelSettings& settings, const UnitGraph& graph);
  // Merges the districts at a uniform cut edge and draws a spanning tree of their union (uniform,
  // or weighted by the settings' tree weights); false (and nothing drawn) if the plan has no cut
  // edge.
  // A pair with a frozen district is not drawn either (false): the step is then a no_cut, which
  // leaves the kernel's law on the plans with the frozen districts fixed as stated.
  bool draw(const Plan& plan, Rng& rng);
  [[nodiscard]] std::span<const std::uint32_t> balanced_cuts(const RuleTracker& rules);
  // At least the balanced edges any spanning tree of the merged region can have under the rules'
  // population bounds: a function of the region alone (planmill/moves/cut_bound.hpp).
  [[nodiscard]] std::size_t balanced_edge_bound(const RuleTracker& rules);
  // Relabels the merged region: the subtree below `child` gets one of the two labels (by a fair
  // coin, so the proposal is symmetric in the labels), the rest the other.
  void apply(ChainState& state, std::uint32_t child, Rng& rng);
  // Puts back the labels the region had before apply().
  void revert(ChainState& state);
  [[nodiscard]] DistrictIndex first() const noexcept { return a_; }
  [[nodiscard]] DistrictIndex second() const noexcept { return b_; }
  [[nodiscard]] std::size_t region_size() const noexcept { return region_.size(); }
  // The smallest unit of district d within the merged region (d must be one of its two labels).
  [[nodiscard]] UnitIndex smallest_unit_of(const Plan& plan, DistrictIndex d) const noexcept;
  [[nodiscard]] bool weighted() const noexcept { return !region_.weights().empty(); }
  // Edges of the merged region whose ends have different labels now, and their total tree weight.
  void pair_boundary(const Plan& plan, double& edges, double& weight) const noexcept;

 private:
  KernelSettings frozen_;  // only its frozen districts are read
  Region region_;
  SpanningTreeSampler sampler_;
  std::vector<std::uint8_t> side_;
  std::vector<DistrictIndex> before_;  // label of each local vertex before apply()
  std::vector<std::int64_t> bound_scratch_;
  DistrictIndex a_ = 0, b_ = 0;
};

class RecombinationKernel final : public Kernel {
 public:
  RecombinationKernel(const KernelSettings& settings, const UnitGraph& graph, std::size_t district_count);
  void reset(const ChainState&) override {}
  StepResult step(ChainState& state, Rng& rng) override;
  [[nodiscard]] KernelKind kind() const noexcept override { return KernelKind::recombination; }
  void set_beta(double) noexcept override {}

 private:
  TreeProposal proposal_;
};

class MergeSplitKernel final : public Kernel {
 public:
  MergeSplitKernel(const KernelSettings& settings, const UnitGraph& graph, std::size_t district_count);
  void reset(const ChainState& state) override;
  StepResult step(ChainState& state, Rng& rng) override;
  [[nodiscard]] KernelKind kind() const noexcept override { return KernelKind::merge_split; }
  void set_beta(double beta) noexcept override { settings_.beta = beta; }

 private:
  // log tau of the district holding `smallest`, its smallest unit. Growing the region from a
  // canonical unit keeps the floating-point result a function of the plan alone, so a chain
  // restored from a snapshot recomputes bit-identical values.
  [[nodiscard]] double log_tree_count(const Plan& plan, UnitIndex smallest);

  KernelSettings settings_;
  TreeProposal proposal_;
  Region count_region_;
  TreeCounter counter_;
  std::vector<double> log_tau_;  // per district, only when gamma != 1
};

}  // namespace planmill
