#include "planmill/chain/chain.hpp"
#include "planmill/chain/snapshot_check.hpp"

#include <bit>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

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

struct ParsedSnapshot {
  int version = 0;
  std::uint64_t index = 0, beta_bits = 0;
  std::size_t districts = 0;
  Rng rng;
  ChainCounters counters;
  std::vector<DistrictIndex> labels;
};

// A Chain::save() text of a map of `units` units, read as far as its labels (each below its
// district count); throws std::invalid_argument otherwise.
ParsedSnapshot parse_snapshot(std::string_view snapshot, std::size_t units) {
  std::istringstream in{std::string(snapshot)};
  std::string magic;
  ParsedSnapshot p;
  std::size_t snapshot_units = 0;
  in >> magic >> p.version >> p.index >> snapshot_units >> p.districts;
  if (!in || magic != "planmill-chain" || (p.version != 1 && p.version != 2))
    throw std::invalid_argument("not a planmill chain snapshot");
  if (p.version == 2) in >> p.beta_bits;
  if (snapshot_units != units)
    throw std::invalid_argument("the chain snapshot has " + std::to_string(snapshot_units) +
                                " units, the map " + std::to_string(units));
  in >> p.rng >> p.counters.steps;
  for (auto& c : p.counters.outcomes) in >> c;
  p.labels.resize(units);
  for (auto& d : p.labels) in >> d;
  if (!in) throw std::invalid_argument("chain snapshot is truncated");
  for (const DistrictIndex d : p.labels) {
    if (d >= p.districts)
      throw std::invalid_argument("the plan in the chain snapshot has district label " +
                                  std::to_string(d) + ", beyond " + std::to_string(p.districts));
  }
  return p;
}

// A snapshot's plan is one a chain can hold: every district used and contiguous.
Plan checked_plan(const GraphHandle& graph, const ParsedSnapshot& p) {
  std::vector<std::size_t> units(p.districts, 0);
  for (const DistrictIndex d : p.labels) ++units[d];
  for (std::size_t d = 0; d < units.size(); ++d) {
    if (units[d] == 0) {
      throw std::invalid_argument("the plan in the chain snapshot leaves district " +
                                  std::to_string(d) + " empty");
    }
  }
  Plan plan(graph, p.districts, p.labels);
  for (std::size_t d = 0; d < units.size(); ++d) {
    if (!plan.is_connected(static_cast<DistrictIndex>(d))) {
      throw std::invalid_argument("the plan in the chain snapshot has district " +
                                  std::to_string(d) + " in pieces (not contiguous)");
    }
  }
  return plan;
}

}  // namespace

void check_chain_snapshot(std::string_view snapshot, const GraphHandle& graph,
                          std::size_t district_count) {
  const ParsedSnapshot p = parse_snapshot(snapshot, graph->unit_count());
  if (p.districts != district_count)
    throw std::invalid_argument("the chain snapshot has " + std::to_string(p.districts) +
                                " districts, the job " + std::to_string(district_count));
  (void)checked_plan(graph, p);
}

void Chain::restore(std::string_view snapshot) {
  const ParsedSnapshot p = parse_snapshot(snapshot, state_.plan.unit_count());
  if (p.districts != state_.plan.district_count())
    throw std::invalid_argument("snapshot is for another map or district count");
  Plan plan = checked_plan(state_.plan.graph_handle(), p);
  state_ = ChainState(std::move(plan), state_.rules.rules());
  kernel_->reset(state_);
  rng_ = p.rng;
  counters_ = p.counters;
  chain_index_ = p.index;
  set_beta(p.version == 2 ? std::bit_cast<double>(p.beta_bits) : setup_beta_);
}

}  // namespace planmill
