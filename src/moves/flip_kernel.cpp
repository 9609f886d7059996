#include "moves/flip_kernel.hpp"

#include <algorithm>
#include <cmath>

namespace planmill {

void BoundarySet::reset(const Plan& plan) {
  on_boundary_.assign(plan.unit_count(), 0);
  count_ = 0;
  for (UnitIndex u = 0; u < plan.unit_count(); ++u) refresh(plan, u);
}

void BoundarySet::refresh(const Plan& plan, UnitIndex u) {
  std::uint8_t now = 0;
  for (UnitIndex v : plan.graph().neighbors(u))
    if (plan.district_of(v) != plan.district_of(u)) {
      now = 1;
      break;
    }
  count_ = count_ + now - on_boundary_[u];
  on_boundary_[u] = now;
}

UnitIndex BoundarySet::draw(Rng& rng) const noexcept {
  const auto n = static_cast<std::uint32_t>(on_boundary_.size());
  for (std::uint32_t miss = 0; miss < n; ++miss) {
    const UnitIndex u = uniform_below(rng, n);
    if (on_boundary_[u]) return u;
  }
  // Bounded like uniform_cut_edge (moves/kernel.cpp): after n misses, the j-th boundary unit for a
  // uniform j. Each round and the scan are uniform over the set, so their mixture is too.
  std::uint32_t j = uniform_below(rng, static_cast<std::uint32_t>(count_));
  for (UnitIndex u = 0; u < n; ++u)
    if (on_boundary_[u] && j-- == 0) return u;
  return 0;  // not reached while count_ is right
}

void BoundarySet::update_around(const Plan& plan, UnitIndex u) {
  refresh(plan, u);
  for (UnitIndex v : plan.graph().neighbors(u)) refresh(plan, v);
}

FlipKernel::FlipKernel(const KernelSettings& settings, const UnitGraph& graph) : settings_(settings) {
  neighbours_.reserve(graph.adjacency().max_degree());
}

std::size_t FlipKernel::collect_other_districts(const Plan& plan, UnitIndex u, DistrictIndex own) {
  neighbours_.clear();
  for (UnitIndex v : plan.graph().neighbors(u)) {
    const DistrictIndex d = plan.district_of(v);
    if (d != own && std::find(neighbours_.begin(), neighbours_.end(), d) == neighbours_.end())
      neighbours_.push_back(d);
  }
  return neighbours_.size();
}

void FlipKernel::move(ChainState& state, UnitIndex u, DistrictIndex to) {
  state.rules.move(state.plan, u, to);
  boundary_.update_around(state.plan, u);
}

StepResult FlipKernel::step(ChainState& state, Rng& rng) {
  // alpha = min{1, pi(P')/pi(P) * |dP| |N(v,P)| / (|dP'| |N(v,P')|)}: docs/kernels.md, "Flip".
  Plan& plan = state.plan;
  if (boundary_.size() == 0) return StepResult::no_cut;  // one district: nothing can move
  const double boundary_before = static_cast<double>(boundary_.size());
  const UnitIndex v = boundary_.draw(rng);
  const DistrictIndex from = plan.district_of(v);
  const std::size_t choices_before = collect_other_districts(plan, v, from);
  const DistrictIndex to = neighbours_[uniform_below(rng, static_cast<std::uint32_t>(choices_before))];
  if (is_frozen(settings_, from) || is_frozen(settings_, to)) return StepResult::no_cut;
  const std::int64_t pop = plan.graph().population(v);
  if (plan.population(from) - pop < state.rules.population_min() ||
      plan.population(to) + pop > state.rules.population_max())
    return StepResult::invalid;
  const double energy_before = state.rules.energy(plan);
  move(state, v, to);
  // The chain's plans are valid, so `from` was connected with v: the check may start next to v.
  if (!plan.is_connected_without(from, v) || !state.rules.limits_ok(plan)) {
    move(state, v, from);
    return StepResult::invalid;
  }
  const std::size_t choices_after = collect_other_districts(plan, v, to);
  double log_ratio = -settings_.beta * (state.rules.energy(plan) - energy_before);
  if (!settings_.drop_hastings_factor)
    log_ratio += std::log(boundary_before * static_cast<double>(choices_before)) -
                 std::log(static_cast<double>(boundary_.size()) * static_cast<double>(choices_after));
  if (log_ratio >= 0.0 || std::log(uniform01(rng)) < log_ratio) return StepResult::accepted;
  move(state, v, from);
  return StepResult::rejected;
}

}  // namespace planmill
