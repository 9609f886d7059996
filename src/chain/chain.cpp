#include "planmill/chain/chain.hpp"
#include "planmill/chain/snapshot_check.hpp"

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

namespace {

// A snapshot's plan is one a chain can hold: every district used and contiguous.
void check_plan(const Plan& plan, const std::vector<DistrictIndex>& labels) {
  std::vector<std::size_t> units(plan.district_count(), 0);
  for (const DistrictIndex d : labels) ++units[d];
  for (std::size_t d = 0; d < units.size(); ++d) {
    if (units[d] == 0) {
      throw std::invalid_argument("the plan in the chain snapshot leaves district " +
                                  std::to_string(d) + " empty");
    }
  }
  for (std::size_t d = 0; d < units.size(); ++d) {
    if (!plan.is_connected(static_cast<DistrictIndex>(d))) {
      throw std::invalid_argument("the plan in the chain snapshot has district " +
                                  std::to_string(d) + " in pieces (not contiguous)");
    }
  }
}

}  // namespace

void check_chain_snapshot(std::string_view snapshot, const GraphHandle& graph,
                          std::size_t district_count) {
  std::istringstream in{std::string(snapshot)};
  std::string magic;
  int version = 0;
  std::uint64_t index = 0, bits = 0, steps = 0, outcome = 0;
  std::size_t units = 0, districts = 0;
  in >> magic >> version >> index >> units >> districts;
  if (!in || magic != "planmill-chain" || (version != 1 && version != 2))
    throw std::invalid_argument("not a planmill chain snapshot");
  if (version == 2) in >> bits;
  if (units != graph->unit_count())
    throw std::invalid_argument("the chain snapshot has " + std::to_string(units) +
                                " units, the map " + std::to_string(graph->unit_count()));
  if (districts != district_count)
    throw std::invalid_argument("the chain snapshot has " + std::to_string(districts) +
                                " districts, the job " + std::to_string(district_count));
  Rng rng;
  in >> rng >> steps;
  for (std::size_t k = 0; k < kStepResultCount; ++k) in >> outcome;
  std::vector<DistrictIndex> labels(units);
  for (auto& d : labels) in >> d;
  if (!in) throw std::invalid_argument("chain snapshot is truncated");
  for (const DistrictIndex d : labels) {
    if (d >= districts)
      throw std::invalid_argument("the plan in the chain snapshot has district label " +
                                  std::to_string(d) + ", beyond " + std::to_string(districts));
  }
  const Plan plan(graph, districts, labels);
  check_plan(plan, labels);
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
  for (const DistrictIndex d : labels) {
    if (d >= districts)
      throw std::invalid_argument("the plan in the chain snapshot has district label " +
                                  std::to_string(d) + ", beyond " + std::to_string(districts));
  }
  Plan plan(state_.plan.graph_handle(), districts, labels);
  check_plan(plan, labels);
  state_ = ChainState(std::move(plan), state_.rules.rules());
  kernel_->reset(state_);
  rng_ = rng;
  counters_ = counters;
  chain_index_ = index;
  set_beta(beta);
}

}  // namespace planmill
