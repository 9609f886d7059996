#include "moves/tree_kernels.hpp"

#include <cmath>
#include <stdexcept>
#include <string>

#include "planmill/base/error.hpp"
#include "planmill/moves/cut_bound.hpp"
#include "planmill/tree/tree_weights.hpp"

namespace planmill {

namespace {

TreeWeights tree_weights(const KernelSettings& settings) {
  return {settings.county_tree_weight, settings.municipality_tree_weight};
}

}  // namespace

TreeProposal::TreeProposal(const KernelSettings& settings, const UnitGraph& graph)
    : side_(graph.unit_count()), before_(graph.unit_count()) {
  bound_scratch_.reserve(graph.unit_count());
  frozen_.frozen = settings.frozen;
  region_.set_weights(tree_weights(settings));
}

void TreeProposal::pair_boundary(const Plan& plan, double& edges, double& weight) const noexcept {
  edges = weight = 0.0;
  const AdjacencyView adjacency = region_.adjacency();
  const std::span<const double> w = region_.weights();
  for (std::uint32_t i = 0; i < region_.size(); ++i) {
    const DistrictIndex d = plan.district_of(region_.global(i));
    const auto first = adjacency.offsets()[i];
    const std::span<const std::uint32_t> neighbors = adjacency.neighbors(i);
    for (std::size_t t = 0; t < neighbors.size(); ++t) {
      const std::uint32_t j = neighbors[t];
      if (j < i || plan.district_of(region_.global(j)) == d) continue;
      edges += 1.0;
      weight += w.empty() ? 1.0 : w[first + t];
    }
  }
}

bool TreeProposal::draw(const Plan& plan, Rng& rng) {
  const UnitGraph& g = plan.graph();
  const EdgeIndex e = uniform_cut_edge(plan, rng);
  if (e == kNoEdge) return false;
  a_ = plan.district_of(g.edge_first(e));
  b_ = plan.district_of(g.edge_second(e));
  if (is_frozen(frozen_, a_) || is_frozen(frozen_, b_)) return false;
  if (a_ > b_) std::swap(a_, b_);
  region_.build_from_seeds(plan, g.edge_first(e), g.edge_second(e));
  sampler_.sample(region_, rng);
  return true;
}

std::span<const std::uint32_t> TreeProposal::balanced_cuts(const RuleTracker& rules) {
  return sampler_.balanced_cuts(rules.population_min(), rules.population_max());
}

std::size_t TreeProposal::balanced_edge_bound(const RuleTracker& rules) {
  return planmill::balanced_edge_bound(region_.populations(), rules.population_min(), rules.population_max(),
                                       bound_scratch_);
}

void TreeProposal::apply(ChainState& state, std::uint32_t child, Rng& rng) {
  const std::span<std::uint8_t> side(side_.data(), region_.size());
  sampler_.mark_side(child, side);
  const bool flip = (rng() & 1U) != 0;
  const DistrictIndex inside = flip ? b_ : a_, outside = flip ? a_ : b_;
  for (std::uint32_t i = 0; i < region_.size(); ++i) {
    const UnitIndex u = region_.global(i);
    before_[i] = state.plan.district_of(u);
    const DistrictIndex to = side[i] ? inside : outside;
    if (to != before_[i]) state.rules.move(state.plan, u, to);
  }
}

void TreeProposal::revert(ChainState& state) {
  for (std::uint32_t i = 0; i < region_.size(); ++i) {
    const UnitIndex u = region_.global(i);
    if (state.plan.district_of(u) != before_[i]) state.rules.move(state.plan, u, before_[i]);
  }
}

RecombinationKernel::RecombinationKernel(const KernelSettings& settings, const UnitGraph& graph, std::size_t)
    : proposal_(settings, graph) {}

StepResult RecombinationKernel::step(ChainState& state, Rng& rng) {
  if (!proposal_.draw(state.plan, rng)) return StepResult::no_cut;
  const auto cuts = proposal_.balanced_cuts(state.rules);
  if (cuts.empty()) return StepResult::no_cut;
  proposal_.apply(state, cuts[uniform_below(rng, static_cast<std::uint32_t>(cuts.size()))], rng);
  if (!state.rules.limits_ok(state.plan)) {
    proposal_.revert(state);
    return StepResult::invalid;
  }
  return StepResult::accepted;
}

MergeSplitKernel::MergeSplitKernel(const KernelSettings& settings, const UnitGraph& graph,
                                   std::size_t district_count)
    : settings_(settings), proposal_(settings, graph), log_tau_(district_count, 0.0) {
  count_region_.set_weights(tree_weights(settings));
}

UnitIndex TreeProposal::smallest_unit_of(const Plan& plan, DistrictIndex d) const noexcept {
  UnitIndex smallest = static_cast<UnitIndex>(-1);
  for (const UnitIndex u : region_.units())
    if (u < smallest && plan.district_of(u) == d) smallest = u;
  return smallest;
}

double MergeSplitKernel::log_tree_count(const Plan& plan, UnitIndex smallest) {
  count_region_.build_from_seeds(plan, smallest, smallest);
  return counter_.log_count(count_region_);
}

void MergeSplitKernel::reset(const ChainState& state) {
  if (settings_.gamma == 1.0) return;
  std::vector<UnitIndex> smallest(state.plan.district_count(), static_cast<UnitIndex>(-1));
  for (UnitIndex u = static_cast<UnitIndex>(state.plan.unit_count()); u-- > 0;)
    smallest[state.plan.district_of(u)] = u;
  for (DistrictIndex d = 0; d < state.plan.district_count(); ++d)
    log_tau_[d] = log_tree_count(state.plan, smallest[d]);
}

StepResult MergeSplitKernel::step(ChainState& state, Rng& rng) {
  // Proposal and acceptance: ../docs/kernels.md, "Merge-split". With a uniform cut edge choosing
  // the pair, q(P')/q(P) times |E(A,B)|/|E(A',B')| reduces to cut(P)/cut(P').
  const double cut_before = static_cast<double>(state.plan.cut_edge_count());
  const double energy_before = state.rules.energy(state.plan);
  if (!proposal_.draw(state.plan, rng)) return StepResult::no_cut;
  const auto cuts = proposal_.balanced_cuts(state.rules);
  // M may depend on the merged region U alone: the move and its reverse share U, so M cancels.
  const std::size_t bound =
      settings_.balanced_cut_bound > 0 ? settings_.balanced_cut_bound : proposal_.balanced_edge_bound(state.rules);
  // A setting the map outgrew, not a fault: the chain's state is as before the draw.
  if (cuts.size() > bound)
    throw InputError({"", 0, "sampler.balanced_cut_bound"},
                     "a merge-split spanning tree had " + std::to_string(cuts.size()) +
                         " balanced edges, more than the bound " + std::to_string(bound),
                     "set it to at least " + std::to_string(cuts.size()) +
                         " (with room to spare) and start the run anew");
  const std::uint32_t pick = uniform_below(rng, static_cast<std::uint32_t>(bound));
  if (pick >= cuts.size()) return StepResult::no_cut;
  double edges_before = 0, weight_before = 0;
  if (proposal_.weighted()) proposal_.pair_boundary(state.plan, edges_before, weight_before);
  proposal_.apply(state, cuts[pick], rng);
  if (!state.rules.limits_ok(state.plan)) {
    proposal_.revert(state);
    return StepResult::invalid;
  }
  double log_ratio = -settings_.beta * (state.rules.energy(state.plan) - energy_before);
  if (!settings_.drop_hastings_factor)
    log_ratio += std::log(cut_before) - std::log(static_cast<double>(state.plan.cut_edge_count()));
  if (proposal_.weighted() && !settings_.drop_hastings_factor && !settings_.drop_tree_weight_factor) {
    // Weighted trees: the split (A', B') is drawn with chance ∝ w(E(A',B')) τ_w(A')τ_w(B'), and
    // the pair by a uniform cut edge with chance ∝ |E(A,B)|, so the two no longer cancel:
    // factor |E(A',B')| w(E(A,B)) / (|E(A,B)| w(E(A',B'))) (docs/kernels.md, "County weights").
    double edges_after = 0, weight_after = 0;
    proposal_.pair_boundary(state.plan, edges_after, weight_after);
    log_ratio += std::log(edges_after) + std::log(weight_before) - std::log(edges_before) - std::log(weight_after);
  }
  const DistrictIndex a = proposal_.first(), b = proposal_.second();
  double tau_a = 0, tau_b = 0;
  if (settings_.gamma != 1.0) {
    tau_a = log_tree_count(state.plan, proposal_.smallest_unit_of(state.plan, a));
    tau_b = log_tree_count(state.plan, proposal_.smallest_unit_of(state.plan, b));
    log_ratio += (settings_.gamma - 1.0) * (tau_a + tau_b - log_tau_[a] - log_tau_[b]);
  }
  if (log_ratio >= 0.0 || std::log(uniform01(rng)) < log_ratio) {
    log_tau_[a] = tau_a;
    log_tau_[b] = tau_b;
    return StepResult::accepted;
  }
  proposal_.revert(state);
  return StepResult::rejected;
}

}  // namespace planmill
