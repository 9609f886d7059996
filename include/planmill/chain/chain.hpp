#pragma once
// One chain: its state, its own random stream keyed by (run seed, chain index), the kernel, and
// counts of every step's outcome. save()/restore() round-trip the whole chain exactly, including
// its current beta (which parallel tempering changes between steps).
#include <array>
#include <memory>
#include <string>
#include <string_view>

#include "planmill/moves/kernel.hpp"

namespace planmill {

struct ChainCounters {
  std::uint64_t steps = 0;
  std::array<std::uint64_t, kStepResultCount> outcomes{};  // indexed by StepResult
  [[nodiscard]] double acceptance() const noexcept {
    return steps ? static_cast<double>(outcomes[0]) / static_cast<double>(steps) : 0.0;
  }
};

struct ChainSetup {
  GraphHandle graph;
  RuleSet rules;
  KernelSettings kernel;
  std::uint64_t run_seed = 1;
  std::uint64_t chain_index = 0;
};

class Chain {
 public:
  Chain(const ChainSetup& setup, Plan start);

  StepResult step();
  [[nodiscard]] const ChainState& state() const noexcept { return state_; }
  [[nodiscard]] const ChainCounters& counters() const noexcept { return counters_; }
  [[nodiscard]] std::uint64_t chain_index() const noexcept { return chain_index_; }
  // The inverse temperature the kernel uses now (ChainSetup::kernel.beta until set_beta).
  [[nodiscard]] double beta() const noexcept { return beta_; }
  // For tempering: takes effect from the next step. Allocates nothing.
  void set_beta(double beta) noexcept;
  // Empties the plan's list of moved units (Plan::changes()); call it after recording the plan.
  void clear_plan_changes() noexcept { state_.plan.clear_changes(); }

  // Text snapshot of the RNG, counters, beta and plan; restore() accepts only a snapshot of a chain
  // with the same map and district count, and throws std::invalid_argument otherwise. Snapshots of
  // format 1 carry no beta: restoring one sets beta back to the setup's (what they always meant).
  [[nodiscard]] std::string save() const;
  void restore(std::string_view snapshot);

 private:
  std::uint64_t chain_index_;
  double setup_beta_;
  double beta_;
  ChainState state_;
  std::unique_ptr<Kernel> kernel_;
  Rng rng_;
  ChainCounters counters_;
};

}  // namespace planmill
