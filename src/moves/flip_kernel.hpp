#pragma once
// Boundary flip with the Metropolis-Hastings correction for the number of possible moves.
#include <vector>

#include "planmill/moves/kernel.hpp"

namespace planmill {

// Units with a neighbour in another district: a flag per unit and their number. Draws are by
// rejection from uniform units, so they depend only on the plan, never on the order of past
// moves; a chain restored from a checkpoint continues exactly.
class BoundarySet {
 public:
  void reset(const Plan& plan);
  // Re-evaluates u and its neighbours after u moved.
  void update_around(const Plan& plan, UnitIndex u);
  [[nodiscard]] std::size_t size() const noexcept { return count_; }
  // A uniform member; the set must not be empty. Bounded: see flip_kernel.cpp.
  [[nodiscard]] UnitIndex draw(Rng& rng) const noexcept;

 private:
  void refresh(const Plan& plan, UnitIndex u);
  std::vector<std::uint8_t> on_boundary_;
  std::size_t count_ = 0;
};

class FlipKernel final : public Kernel {
 public:
  FlipKernel(const KernelSettings& settings, const UnitGraph& graph);
  void reset(const ChainState& state) override { boundary_.reset(state.plan); }
  StepResult step(ChainState& state, Rng& rng) override;
  [[nodiscard]] KernelKind kind() const noexcept override { return KernelKind::flip; }
  void set_beta(double beta) noexcept override { settings_.beta = beta; }

 private:
  // Distinct districts other than `own` among u's neighbours, into neighbours_.
  std::size_t collect_other_districts(const Plan& plan, UnitIndex u, DistrictIndex own);
  void move(ChainState& state, UnitIndex u, DistrictIndex to);

  KernelSettings settings_;
  BoundarySet boundary_;
  std::vector<DistrictIndex> neighbours_;
};

}  // namespace planmill
