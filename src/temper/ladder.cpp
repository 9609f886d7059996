#include "planmill/temper/ladder.hpp"

#include "planmill/chain/snapshot_check.hpp"

#include <algorithm>
#include <bit>
#include <cmath>
#include <sstream>
#include <stdexcept>
#include <string>
#include <utility>

namespace planmill {

std::vector<double> geometric_betas(double target, double hottest, std::size_t rungs) {
  if (rungs < 2) throw std::invalid_argument("a ladder needs at least two rungs");
  if (!std::isfinite(target) || !std::isfinite(hottest) || !(hottest > 0.0) || !(hottest < target))
    throw std::invalid_argument("a geometric ladder needs 0 < hottest beta < target beta");
  std::vector<double> betas(rungs);
  const double ratio = hottest / target;
  for (std::size_t r = 0; r < rungs; ++r)
    betas[r] = target * std::pow(ratio, static_cast<double>(r) / static_cast<double>(rungs - 1));
  betas.back() = hottest;
  return betas;
}

void check_betas(std::span<const double> betas) {
  if (betas.size() < 2) throw std::invalid_argument("a ladder needs at least two rungs");
  for (std::size_t r = 0; r < betas.size(); ++r) {
    if (!std::isfinite(betas[r]) || betas[r] < 0.0)
      throw std::invalid_argument("ladder betas must be finite and not negative");
    if (r > 0 && !(betas[r] < betas[r - 1]))
      throw std::invalid_argument("ladder betas must decrease strictly from the target rung");
  }
}

double LadderStatistics::swap_acceptance(std::size_t pair) const noexcept {
  return swap_attempts[pair]
             ? static_cast<double>(swap_accepts[pair]) / static_cast<double>(swap_attempts[pair])
             : std::numeric_limits<double>::quiet_NaN();
}

double LadderStatistics::time_fraction(std::size_t replica, std::size_t rung) const noexcept {
  std::uint64_t total = 0;
  for (std::size_t r = 0; r < rungs; ++r) total += steps_on_rung[replica * rungs + r];
  return total ? static_cast<double>(steps_on_rung[replica * rungs + rung]) /
                     static_cast<double>(total)
               : std::numeric_limits<double>::quiet_NaN();
}

double LadderStatistics::up_fraction(std::size_t rung) const noexcept {
  const std::uint64_t total = up_steps[rung] + down_steps[rung];
  return total ? static_cast<double>(up_steps[rung]) / static_cast<double>(total)
               : std::numeric_limits<double>::quiet_NaN();
}

double LadderStatistics::mean_round_trip() const noexcept {
  return round_trips ? static_cast<double>(round_trip_steps) / static_cast<double>(round_trips)
                     : std::numeric_limits<double>::quiet_NaN();
}

Ladder::Ladder(const LadderSetup& setup, std::vector<Plan> starts)
    : ladder_index_(setup.ladder_index),
      swap_every_(setup.swap_every),
      wrong_swap_sign_(setup.wrong_swap_sign),
      betas_(setup.betas),
      rng_(make_stream(setup.chain.run_seed, ladder_stream_key(setup.ladder_index))) {
  check_betas(betas_);
  if (swap_every_ == 0) throw std::invalid_argument("swap_every must be at least 1");
  const std::size_t rungs = betas_.size();
  if (starts.size() != 1 && starts.size() != rungs)
    throw std::invalid_argument("a ladder needs one start plan, or one per rung");
  if (!setup.here.empty() && setup.here.size() != rungs)
    throw std::invalid_argument("LadderSetup::here needs one entry per replica");
  if (!setup.here.empty() && std::find(setup.here.begin(), setup.here.end(), true) == setup.here.end())
    throw std::invalid_argument("a ladder part must hold at least one replica");
  replicas_.resize(rungs);
  for (std::size_t i = 0; i < rungs; ++i) {
    if (!setup.here.empty() && !setup.here[i]) {
      all_here_ = false;
      continue;
    }
    ChainSetup chain = setup.chain;
    chain.chain_index = setup.first_chain_index + i;
    chain.kernel.beta = betas_[i];
    replicas_[i].emplace(chain, starts.size() == 1 ? starts.front() : std::move(starts[i]));
  }
  replica_on_rung_.resize(rungs);
  rung_of_replica_.resize(rungs);
  for (std::uint32_t i = 0; i < rungs; ++i) replica_on_rung_[i] = rung_of_replica_[i] = i;
  energy_on_rung_.resize(rungs);
  energy_of_replica_.resize(rungs);
  accepted_.resize(rungs - 1);
  block_attempts_.assign(rungs - 1, 0);
  block_accepts_.assign(rungs - 1, 0);
  stats_.rungs = rungs;
  stats_.swap_attempts.assign(rungs - 1, 0);
  stats_.swap_accepts.assign(rungs - 1, 0);
  stats_.steps_on_rung.assign(rungs * rungs, 0);
  stats_.up_steps.assign(rungs, 0);
  stats_.down_steps.assign(rungs, 0);
  heading_.assign(rungs, kNone);
  trip_start_.assign(rungs, kNoTrip);
  heading_[0] = kUp;
  trip_start_[0] = 0;
  heading_[rungs - 1] = kDown;
}

const Chain& Ladder::replica(std::size_t i) const {
  const auto& r = replicas_.at(i);
  if (!r) throw std::logic_error("replica " + std::to_string(i) + " is held elsewhere");
  return *r;
}

void Ladder::step() {
  if (!all_here_) throw std::logic_error("Ladder::step needs every replica here");
  step_replicas();
  if (swap_due()) local_energies(energy_of_replica_);
  finish_step(energy_of_replica_);
}

void Ladder::step_replicas() {
  for (auto& c : replicas_) {
    if (c) c->step();
  }
  ++steps_;
}

void Ladder::local_energies(std::span<double> by_replica) const noexcept {
  for (std::size_t i = 0; i < replicas_.size(); ++i) {
    if (!replicas_[i]) {
      by_replica[i] = 0.0;
      continue;
    }
    const ChainState& s = replicas_[i]->state();
    by_replica[i] = s.rules.energy(s.plan);
  }
}

void Ladder::finish_step(std::span<const double> energy_by_replica) {
  if (swap_due()) swap(energy_by_replica);
  const std::size_t rungs = betas_.size();
  for (std::size_t r = 0; r < rungs; ++r) {
    const std::uint32_t i = replica_on_rung_[r];
    ++stats_.steps_on_rung[i * rungs + r];
    if (heading_[i] == kUp)
      ++stats_.up_steps[r];
    else if (heading_[i] == kDown)
      ++stats_.down_steps[r];
  }
  if (tune_end_ != kNoTune) tune_after_step();
}

void Ladder::swap(std::span<const double> energy_by_replica) {
  const std::size_t rungs = betas_.size();
  for (std::size_t r = 0; r < rungs; ++r) energy_on_rung_[r] = energy_by_replica[replica_on_rung_[r]];
  const SwapRoundInput input{betas_, swap_rounds_, wrong_swap_sign_};
  (void)swap_round(input, energy_on_rung_, replica_on_rung_, accepted_, rng_);
  for (std::size_t r = first_pair_of_round(swap_rounds_); r + 1 < rungs; r += 2) {
    ++stats_.swap_attempts[r];
    stats_.swap_accepts[r] += accepted_[r];
  }
  ++swap_rounds_;
  for (std::uint32_t r = 0; r < rungs; ++r) rung_of_replica_[replica_on_rung_[r]] = r;
  apply_betas();
  track_ends();
}

void Ladder::apply_betas() noexcept {
  for (std::size_t i = 0; i < replicas_.size(); ++i) {
    if (replicas_[i]) replicas_[i]->set_beta(betas_[rung_of_replica_[i]]);
  }
}

void Ladder::track_ends() noexcept {
  const std::uint32_t at_target = replica_on_rung_.front(), at_hottest = replica_on_rung_.back();
  if (heading_[at_target] != kUp) {
    if (heading_[at_target] == kDown && trip_start_[at_target] != kNoTrip) {
      ++stats_.round_trips;
      stats_.round_trip_steps += steps_ - trip_start_[at_target];
    }
    heading_[at_target] = kUp;
    trip_start_[at_target] = steps_;
  }
  heading_[at_hottest] = kDown;
}

void Ladder::reset_statistics() {
  auto clear = [](std::vector<std::uint64_t>& v) { std::fill(v.begin(), v.end(), 0); };
  clear(stats_.swap_attempts);
  clear(stats_.swap_accepts);
  clear(stats_.steps_on_rung);
  clear(stats_.up_steps);
  clear(stats_.down_steps);
  stats_.round_trips = stats_.round_trip_steps = 0;
  std::fill(trip_start_.begin(), trip_start_.end(), kNoTrip);
}

// Equal rejection rates (common practice; the cumulative rejection rate as a function of beta is
// the "communication barrier" of Syed et al., JRSS-B 84 (2022) 321 [from memory]): Lambda grows
// by the rejection rate of each pair, and the new betas sit at equal steps of Lambda, interpolated
// linearly in beta. The ends stay fixed and the order is kept (every step of Lambda is > 0).
void Ladder::respace(std::span<const std::uint64_t> attempts,
                     std::span<const std::uint64_t> accepts) {
  const std::size_t rungs = betas_.size();
  if (rungs < 3) return;
  std::vector<double> lambda(rungs, 0.0);
  for (std::size_t r = 0; r + 1 < rungs; ++r) {
    if (attempts[r] == 0) return;  // too few swap rounds in this block to say anything
    const double rejection =
        1.0 - static_cast<double>(accepts[r]) / static_cast<double>(attempts[r]);
    lambda[r + 1] = lambda[r] + std::max(rejection, 1e-3);
  }
  std::vector<double> next = betas_;
  std::size_t r = 0;
  for (std::size_t j = 1; j + 1 < rungs; ++j) {
    const double goal = lambda.back() * static_cast<double>(j) / static_cast<double>(rungs - 1);
    while (lambda[r + 1] < goal) ++r;
    const double t = (goal - lambda[r]) / (lambda[r + 1] - lambda[r]);
    next[j] = betas_[r] + t * (betas_[r + 1] - betas_[r]);
  }
  betas_ = std::move(next);
  check_betas(betas_);
  apply_betas();
}

void Ladder::start_tuning(std::uint64_t steps, const TuneSettings& settings) {
  tune_blocks_ = std::max<std::size_t>(settings.blocks, 1);
  tune_block_ = steps / tune_blocks_;
  if (tune_block_ == 0) tune_blocks_ = 0;
  tune_start_ = steps_;
  tune_end_ = steps_ + steps;
  block_attempts_ = stats_.swap_attempts;
  block_accepts_ = stats_.swap_accepts;
  if (steps == 0) tune_after_step();
}

void Ladder::tune_after_step() {
  const std::uint64_t done = steps_ - tune_start_;
  if (tune_block_ > 0 && done > 0 && done % tune_block_ == 0 && done / tune_block_ <= tune_blocks_) {
    for (std::size_t r = 0; r < block_attempts_.size(); ++r) {
      block_attempts_[r] = stats_.swap_attempts[r] - block_attempts_[r];
      block_accepts_[r] = stats_.swap_accepts[r] - block_accepts_[r];
    }
    respace(block_attempts_, block_accepts_);
    block_attempts_ = stats_.swap_attempts;  // same sizes: no allocation
    block_accepts_ = stats_.swap_accepts;
  }
  if (steps_ == tune_end_) {
    tune_end_ = kNoTune;
    tuned_ = true;
    reset_statistics();
  }
}

namespace {

void write_all(std::ostream& out, const std::vector<std::uint64_t>& v) {
  for (auto x : v) out << ' ' << x;
  out << '\n';
}
void read_all(std::istream& in, std::vector<std::uint64_t>& v) {
  for (auto& x : v) in >> x;
}

}  // namespace

// Format: a header, the tuning schedule, the betas as bit patterns (exact), the rung assignment,
// the swap stream, the statistics and trip bookkeeping (all of it the same on every holder of a
// spread ladder), then "replicas K" and K chain snapshots, each after its replica number and length.
constexpr int kSnapshotVersion = 2;
constexpr std::string_view kReplicasMarker = "\nreplicas ";

std::string Ladder::save_shared() const {
  std::ostringstream out;
  const std::size_t rungs = betas_.size();
  out << "planmill-ladder " << kSnapshotVersion << '\n'
      << ladder_index_ << ' ' << rungs << ' ' << steps_ << ' ' << swap_rounds_ << ' '
      << (tuned_ ? 1 : 0) << '\n'
      << tune_start_ << ' ' << tune_end_ << ' ' << tune_block_ << ' ' << tune_blocks_ << '\n';
  for (double b : betas_) out << std::bit_cast<std::uint64_t>(b) << ' ';
  out << '\n';
  for (auto i : replica_on_rung_) out << i << ' ';
  out << '\n' << rng_ << '\n';
  write_all(out, stats_.swap_attempts);
  write_all(out, stats_.swap_accepts);
  write_all(out, stats_.steps_on_rung);
  write_all(out, stats_.up_steps);
  write_all(out, stats_.down_steps);
  out << stats_.round_trips << ' ' << stats_.round_trip_steps << '\n';
  for (auto h : heading_) out << static_cast<unsigned>(h) << ' ';
  out << '\n';
  write_all(out, trip_start_);
  write_all(out, block_attempts_);
  write_all(out, block_accepts_);
  return out.str();
}

namespace {

void write_replicas(std::ostream& out, const std::vector<std::pair<std::size_t, std::string>>& list) {
  out << kReplicasMarker.substr(1) << list.size() << '\n';
  for (const auto& [i, snapshot] : list) out << i << ' ' << snapshot.size() << '\n' << snapshot;
}

// Splits a snapshot into its shared part and its replica snapshots (by replica number).
std::string_view split_snapshot(std::string_view snapshot,
                                std::vector<std::pair<std::size_t, std::string>>& replicas) {
  const std::size_t marker = snapshot.find(kReplicasMarker);
  if (marker == std::string_view::npos) throw std::invalid_argument("ladder snapshot is truncated");
  const std::string_view shared = snapshot.substr(0, marker + 1);
  std::istringstream in{std::string(snapshot.substr(marker + kReplicasMarker.size()))};
  std::size_t count = 0;
  in >> count;
  for (std::size_t k = 0; k < count && in; ++k) {
    std::size_t i = 0, length = 0;
    in >> i >> length;
    in.get();  // the newline after the length
    std::string text(length, '\0');
    in.read(text.data(), static_cast<std::streamsize>(length));
    replicas.emplace_back(i, std::move(text));
  }
  if (!in) throw std::invalid_argument("ladder snapshot is truncated");
  return shared;
}

}  // namespace

std::string Ladder::save() const {
  std::vector<std::pair<std::size_t, std::string>> list;
  for (std::size_t i = 0; i < replicas_.size(); ++i) {
    if (replicas_[i]) list.emplace_back(i, replicas_[i]->save());
  }
  std::ostringstream out;
  out << save_shared();
  write_replicas(out, list);
  return out.str();
}

std::string Ladder::combine_snapshots(std::span<const std::string> parts) {
  if (parts.empty()) throw std::invalid_argument("no ladder snapshots to combine");
  std::vector<std::pair<std::size_t, std::string>> all;
  std::string_view shared;
  for (const auto& part : parts) {
    const std::string_view mine = split_snapshot(part, all);
    if (shared.empty()) shared = mine;
    if (mine != shared)
      throw std::invalid_argument("the holders of a ladder disagree about its rungs or statistics");
  }
  std::istringstream header{std::string(shared)};
  std::string magic;
  int version = 0;
  std::uint64_t index = 0;
  std::size_t rungs = 0;
  header >> magic >> version >> index >> rungs;
  std::sort(all.begin(), all.end(), [](const auto& a, const auto& b) { return a.first < b.first; });
  if (!header || all.size() != rungs)
    throw std::invalid_argument("the ladder snapshots do not hold each replica exactly once");
  for (std::size_t k = 0; k < all.size(); ++k) {
    if (all[k].first != k)
      throw std::invalid_argument("the ladder snapshots do not hold each replica exactly once");
  }
  std::ostringstream out;
  out << shared;
  write_replicas(out, all);
  return out.str();
}

void check_ladder_snapshot(std::string_view snapshot, const GraphHandle& graph,
                           std::size_t district_count) {
  std::vector<std::pair<std::size_t, std::string>> replicas;
  (void)split_snapshot(snapshot, replicas);
  for (const auto& [i, text] : replicas) {
    try {
      check_chain_snapshot(text, graph, district_count);
    } catch (const std::invalid_argument& e) {
      throw std::invalid_argument("replica " + std::to_string(i) + ": " + e.what());
    }
  }
}

void Ladder::restore(std::string_view snapshot) {
  std::vector<std::pair<std::size_t, std::string>> replica_snapshots;
  std::istringstream in{std::string(snapshot)};
  std::string magic;
  int version = 0;
  std::uint64_t index = 0, steps = 0, rounds = 0;
  std::size_t rungs = 0;
  int tuned = 0;
  in >> magic >> version >> index >> rungs >> steps >> rounds >> tuned;
  if (!in || magic != "planmill-ladder" || version != kSnapshotVersion)
    throw std::invalid_argument("not a planmill ladder snapshot of format " +
                                std::to_string(kSnapshotVersion));
  if (index != ladder_index_ || rungs != betas_.size())
    throw std::invalid_argument("ladder snapshot is for another ladder index or rung count");
  (void)split_snapshot(snapshot, replica_snapshots);
  std::uint64_t tune_start = 0, tune_end = 0, tune_block = 0, tune_blocks = 0;
  in >> tune_start >> tune_end >> tune_block >> tune_blocks;
  std::vector<double> betas(rungs);
  for (double& b : betas) {
    std::uint64_t bits = 0;
    in >> bits;
    b = std::bit_cast<double>(bits);
  }
  std::vector<std::uint32_t> on_rung(rungs);
  for (auto& i : on_rung) in >> i;
  Rng rng;
  in >> rng;
  LadderStatistics stats = stats_;
  read_all(in, stats.swap_attempts);
  read_all(in, stats.swap_accepts);
  read_all(in, stats.steps_on_rung);
  read_all(in, stats.up_steps);
  read_all(in, stats.down_steps);
  in >> stats.round_trips >> stats.round_trip_steps;
  std::vector<std::uint8_t> heading(rungs);
  for (auto& h : heading) {
    unsigned value = 0;
    in >> value;
    if (value > kDown) throw std::invalid_argument("ladder snapshot has a bad heading");
    h = static_cast<std::uint8_t>(value);
  }
  std::vector<std::uint64_t> trip_start(rungs), block_attempts(rungs - 1), block_accepts(rungs - 1);
  read_all(in, trip_start);
  read_all(in, block_attempts);
  read_all(in, block_accepts);
  if (!in) throw std::invalid_argument("ladder snapshot is truncated");
  check_betas(betas);
  std::vector<std::uint8_t> seen(rungs, 0);
  for (auto i : on_rung) {
    if (i >= rungs || seen[i])
      throw std::invalid_argument("ladder snapshot has a bad rung assignment");
    seen[i] = 1;
  }
  std::vector<const std::string*> mine(rungs, nullptr);
  for (const auto& [i, text] : replica_snapshots) {
    if (i < rungs) mine[i] = &text;
  }
  for (std::size_t i = 0; i < rungs; ++i) {
    if (replicas_[i] && !mine[i])
      throw std::invalid_argument("ladder snapshot lacks replica " + std::to_string(i));
  }
  // Everything of the ladder itself is read and checked. A replica snapshot of another map still
  // throws here, after which the ladder is in no defined state and must not be used.
  for (std::size_t i = 0; i < rungs; ++i) {
    if (replicas_[i]) replicas_[i]->restore(*mine[i]);
  }
  betas_ = std::move(betas);
  replica_on_rung_ = std::move(on_rung);
  for (std::uint32_t r = 0; r < rungs; ++r) rung_of_replica_[replica_on_rung_[r]] = r;
  rng_ = rng;
  steps_ = steps;
  swap_rounds_ = rounds;
  tuned_ = tuned != 0;
  tune_start_ = tune_start;
  tune_end_ = tune_end;
  tune_block_ = tune_block;
  tune_blocks_ = tune_blocks;
  block_attempts_ = std::move(block_attempts);
  block_accepts_ = std::move(block_accepts);
  stats_ = std::move(stats);
  heading_ = std::move(heading);
  trip_start_ = std::move(trip_start);
  apply_betas();
}

}  // namespace planmill
