#include "planmill/chain/chain.hpp"

#include <bit>
#include <sstream>
#include <stdexcept>

namespace planmill {

Chain::Chain(const ChainSetup& setup, Plan start)
    : chain_index_(setup.chain_index),
      setup_beta_(setup.kernel.beta),
      beta_(setup.kernel.beta),
      state_(std::move(start), setup.rules),
      kernel_(make_kernel(setup.kernel, *setup.graph, state_.plan.district_count())),
      rng_(make_stream(setup.run_seed, setup.chain_index)) {
  kernel_->reset(state_);
}

StepResult Chain::step() {
  const StepResult result = kernel_->step(state_, rng_);
  ++counters_.steps;
  ++counters_.outcomes[static_cast<std::size_t>(result)];
  return result;
}

void Chain::set_beta(double beta) noexcept {
  beta_ = beta;
  kernel_->set_beta(beta);
}

// Format 2 adds the bits of beta (exact) after the district count.
std::string Chain::save() const {
  std::ostringstream out;
  out << "planmill-chain 2\n" << chain_index_ << ' ' << state_.plan.unit_count() << ' '
      << state_.plan.district_count() << ' ' << std::bit_cast<std::uint64_t>(beta_) << '\n'
      << rng_ << '\n' << counters_.steps;
  for (auto c : counters_.outcomes) out << ' ' << c;
  out << '\n';
  for (DistrictIndex d : state_.plan.assignment()) out << d << ' ';
  out << '\n';
  return out.str();
}

void Chain::restore(std::string_view snapshot) {
  std::istringstream in{std::string(snapshot)};
  std::string magic;
  int version = 0;
  std::uint64_t index = 0;
  std::size_t units = 0, districts = 0;
  in >> magic >> version >> index >> units >> districts;
  if (!in || magic != "planmill-chain" || (version != 1 && version != 2))
    throw std::invalid_argument("not a planmill chain snapshot");
  double beta = setup_beta_;
  if (version == 2) {
    std::uint64_t bits = 0;
    in >> bits;
    beta = std::bit_cast<double>(bits);
  }
  if (units != state_.plan.unit_count() || districts != state_.plan.district_count())
    throw std::invalid_argument("snapshot is for another map or district count");
  Rng rng;
  ChainCounters counters;
  in >> rng >> counters.steps;
  for (auto& c : counters.outcomes) in >> c;
  std::vector<DistrictIndex> labels(units);
  for (auto& d : labels) in >> d;
  if (!in) throw std::invalid_argument("chain snapshot is truncated");
  Plan plan(state_.plan.graph_handle(), districts, std::move(labels));
  state_ = ChainState(std::move(plan), state_.rules.rules());
  kernel_->reset(state_);
  rng_ = rng;
  counters_ = counters;
  chain_index_ = index;
  set_beta(beta);
}

}  // namespace planmill
