#pragma once
// Proposal kernels over a Plan. A kernel proposes a change, decides it, and leaves the state
// either changed (accepted) or exactly as it was. It knows nothing of files or ranks.
//
//   recombination  spanning-tree recombination: merge two adjacent districts, draw a uniform
//                  spanning tree, cut a uniformly chosen balanced edge. Fast exploration; its
//                  stationary law has no known closed form and is not the spanning-tree law.
//   merge-split    the same proposal with a Metropolis-Hastings correction, so that the chain
//                  targets pi(P) ~ prod_i tau(P_i)^gamma * exp(-beta * E(P)) over valid plans.
//                  With county (municipality) tree weights both draw weighted trees, and tau is
//                  the weighted tree count tau_w.
//   flip           move one boundary unit to a neighbouring district, Metropolis-Hastings
//                  corrected for the varying number of possible moves; targets exp(-beta E(P)).
#include <cstdint>
#include <memory>
#include <vector>

#include "planmill/base/random.hpp"
#include "planmill/moves/kernel_kind.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/rules/rules.hpp"

namespace planmill {

// What the chain works on: the plan and its rule bookkeeping, always in step.
struct ChainState {
  Plan plan;
  RuleTracker rules;
  ChainState(Plan p, const RuleSet& set) : plan(std::move(p)), rules(plan, set) {}
  ChainState(const ChainState& other) : plan(other.plan), rules(other.rules) {}
  ChainState& operator=(const ChainState&) = default;
};

enum class StepResult : std::uint8_t {
  accepted,   // the plan changed
  rejected,   // Metropolis-Hastings rejection (the plan stays)
  no_cut,     // the spanning tree had no balanced edge, or the merge-split coin said "no cut"
  invalid,    // the proposal broke a hard rule (contiguity, population, RuleTracker::limits_ok)
};
inline constexpr std::size_t kStepResultCount = 4;

struct KernelSettings {
  KernelKind kind = KernelKind::recombination;
  double gamma = 0.0;  // merge-split only
  double beta = 1.0;   // multiplies the energy in merge-split and flip
  // Merge-split: M, the bound on balanced edges of a tree. 0 = a proven bound computed from the
  // merged region's populations (planmill/moves/cut_bound.hpp), always exact; a positive value
  // overrides it. A tree with more balanced edges than M is an error, never silently capped.
  std::size_t balanced_cut_bound = 0;
  // Recombination and merge-split: the weight a spanning tree gives an edge inside one county
  // (one municipality), planmill/tree/tree_weights.hpp; 1 = no preference. Merge-split then
  // targets prod tau_w(P_i)^gamma * exp(-beta E(P)) with the weighted tree counts tau_w.
  double county_tree_weight = 1.0;
  double municipality_tree_weight = 1.0;
  // For tests only: leave out the Hastings factor (merge-split: cut(P)/cut(P'); flip: the ratio of
  // move counts), so that tests can show the self-test turns red on a wrong acceptance ratio.
  bool drop_hastings_factor = false;
  // Frozen districts (docs/kernels.md, "Frozen districts"): frozen[d] != 0 keeps district d as
  // it is; a proposal that would change it is a no_cut. Empty: none frozen.
  std::vector<std::uint8_t> frozen;
  // For tests only: leave out merge-split's weighted-tree factor alone (docs/kernels.md, "County
  // weights"), to show the self-test sees it.
  bool drop_tree_weight_factor = false;
};

class Kernel {
 public:
  virtual ~Kernel() = default;
  // Recomputes caches from the state (after construction or a restore from a checkpoint).
  virtual void reset(const ChainState& state) = 0;
  virtual StepResult step(ChainState& state, Rng& rng) = 0;
  [[nodiscard]] virtual KernelKind kind() const noexcept = 0;
  // Changes the inverse temperature between steps (parallel tempering moves a replica between
  // rungs). Allocates nothing; recombination ignores beta.
  virtual void set_beta(double beta) noexcept = 0;
};

[[nodiscard]] inline bool is_frozen(const KernelSettings& settings, DistrictIndex d) noexcept {
  return d < settings.frozen.size() && settings.frozen[d] != 0;
}

[[nodiscard]] std::unique_ptr<Kernel> make_kernel(const KernelSettings& settings, const UnitGraph& graph,
                                                  std::size_t district_count);

// A uniformly chosen cut edge of the plan, or kNoEdge if the plan has none (one district).
// Rejection from uniform edges of the map (exact, O(1) expected per cut-edge fraction), bounded:
// after max_misses misses (default: the map's edge count) the j-th cut edge for a uniform j is
// found by one scan, so a draw never takes more than about two passes over the edges.
[[nodiscard]] EdgeIndex uniform_cut_edge(const Plan& plan, Rng& rng) noexcept;
[[nodiscard]] EdgeIndex uniform_cut_edge(const Plan& plan, Rng& rng, std::size_t max_misses) noexcept;

}  // namespace planmill
