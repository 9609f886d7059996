#pragma once
// A ladder: R replicas (chains) of one job at inverse temperatures b_0 = target > b_1 > ... >
// b_{R-1} = hottest. Every replica takes one kernel step per ladder step; every swap_every steps
// neighbouring rungs propose swaps (temper/swap.hpp). A swap exchanges rung labels and energies,
// never plans: each replica keeps its plan and only its beta changes. The replica on rung 0
// samples the target law, exp(-b_0 E) (flip) or prod tau^gamma exp(-b_0 E) (merge-split).
//
// Randomness: replica i is chain first_chain_index + i with its own stream; swap decisions use the
// ladder's stream (run seed, ladder_stream_key(ladder index)), so results do not depend on where
// replicas run. save()/restore() round-trip everything exactly. Stepping allocates nothing.
//
// Spread over ranks: every rank that holds some of a ladder's replicas keeps a Ladder with only
// those replicas (LadderSetup::here). The rungs, the swap stream, the statistics and the tuning
// are kept in step on every holder because each runs the same swap rounds on the same energies:
//   step_replicas(); if (swap_due()) { local_energies(e); <sum e over the holders>; }
//   finish_step(e);
// That is all step() does when every replica is here.
#include <cstdint>
#include <limits>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "planmill/chain/chain.hpp"
#include "planmill/temper/swap.hpp"

namespace planmill {

// Ladder streams live far above any chain index (pcg32 uses the key's low 63 bits).
inline constexpr std::uint64_t kLadderStreamKeyBase = std::uint64_t{1} << 62;
[[nodiscard]] constexpr std::uint64_t ladder_stream_key(std::uint64_t ladder_index) noexcept {
  return kLadderStreamKeyBase + ladder_index;
}

// b_r = target * (hottest / target)^(r / (R - 1)), r = 0..R-1: equal ratios between neighbours.
// Needs R >= 2 and 0 < hottest < target (a geometric ladder cannot reach 0: list betas for that).
// Throws std::invalid_argument otherwise.
[[nodiscard]] std::vector<double> geometric_betas(double target, double hottest, std::size_t rungs);
// Throws std::invalid_argument unless there are >= 2 finite betas >= 0, strictly decreasing.
void check_betas(std::span<const double> betas);

struct LadderSetup {
  ChainSetup chain;                     // map, rules, kernel, run seed (kernel.beta is unused)
  std::uint64_t ladder_index = 0;       // keys the swap stream
  std::uint64_t first_chain_index = 0;  // replica i is chain first_chain_index + i
  std::vector<double> betas;            // per rung; betas[0] is the target
  std::uint64_t swap_every = 10;        // ladder steps between swap rounds (>= 1)
  bool wrong_swap_sign = false;         // for tests only (see SwapRoundInput::wrong_sign)
  std::vector<bool> here;               // per replica: held by this Ladder; empty: all of them
};

struct LadderStatistics {
  std::size_t rungs = 0;
  std::vector<std::uint64_t> swap_attempts, swap_accepts;  // per pair (r, r+1), r = 0..R-2
  std::vector<std::uint64_t> steps_on_rung;                // [replica * rungs + rung]
  // Katzgraber et al. (2006): per rung, steps spent there by replicas whose last end visited was
  // the target ("up": on their way to the hottest rung) or the hottest ("down").
  std::vector<std::uint64_t> up_steps, down_steps;
  std::uint64_t round_trips = 0;       // target -> hottest -> target, over all replicas
  std::uint64_t round_trip_steps = 0;  // their total length in ladder steps

  [[nodiscard]] double swap_acceptance(std::size_t pair) const noexcept;
  [[nodiscard]] double time_fraction(std::size_t replica, std::size_t rung) const noexcept;
  [[nodiscard]] double up_fraction(std::size_t rung) const noexcept;
  // Mean round-trip length in ladder steps; NaN before the first one.
  [[nodiscard]] double mean_round_trip() const noexcept;
};

// Tuning during burn-in: the tuning steps are cut into `blocks`; after each block the inner rungs
// are re-spaced so that every neighbouring pair has the same swap rejection rate (ends fixed),
// from that block's counts. Then the ladder is frozen and the statistics start afresh.
struct TuneSettings {
  std::size_t blocks = 8;
};

class Ladder {
 public:
  // starts: one plan per replica, or a single plan every replica starts from (plans of replicas
  // held elsewhere are unused). Replica i starts on rung i. Throws std::invalid_argument on bad
  // betas, swap_every 0, a wrong start count, or `here` of the wrong size or holding none.
  Ladder(const LadderSetup& setup, std::vector<Plan> starts);

  // One kernel step of every replica, then a swap round if the step count is a multiple of
  // swap_every. Throws std::logic_error unless every replica is here.
  void step();
  void run(std::uint64_t steps) {
    for (std::uint64_t s = 0; s < steps; ++s) step();
  }
  // The parts of step() for a ladder spread over ranks (see the top of this file).
  // local_energies() writes the energies of the replicas here into by_replica (one entry per
  // replica) and 0 into the others; finish_step() takes every replica's energy when swap_due(),
  // and ignores its argument otherwise.
  void step_replicas();
  [[nodiscard]] bool swap_due() const noexcept { return steps_ % swap_every_ == 0; }
  void local_energies(std::span<double> by_replica) const noexcept;
  void finish_step(std::span<const double> energy_by_replica);

  // Adapts the inner betas during the next `steps` ladder steps (see TuneSettings), then freezes
  // them and clears the statistics. With two rungs nothing is adapted (there is no inner rung).
  void start_tuning(std::uint64_t steps, const TuneSettings& settings = {});
  void tune(std::uint64_t steps, const TuneSettings& settings = {}) {
    start_tuning(steps, settings);
    run(steps);
  }
  [[nodiscard]] bool tuning() const noexcept { return tune_end_ != kNoTune; }
  // Clears the statistics (e.g. after an untuned burn-in). Round trips begun before are not
  // counted.
  void reset_statistics();

  [[nodiscard]] std::size_t rungs() const noexcept { return betas_.size(); }
  [[nodiscard]] const std::vector<double>& betas() const noexcept { return betas_; }
  [[nodiscard]] bool tuned() const noexcept { return tuned_; }
  [[nodiscard]] std::uint64_t steps() const noexcept { return steps_; }
  [[nodiscard]] std::uint64_t swap_rounds() const noexcept { return swap_rounds_; }
  [[nodiscard]] std::uint64_t ladder_index() const noexcept { return ladder_index_; }
  [[nodiscard]] std::uint64_t swap_every() const noexcept { return swap_every_; }
  [[nodiscard]] bool holds(std::size_t replica) const { return replicas_.at(replica).has_value(); }
  // Throws std::logic_error for a replica held elsewhere.
  [[nodiscard]] const Chain& replica(std::size_t i) const;
  [[nodiscard]] const Chain& on_rung(std::size_t rung) const {
    return replica(replica_on_rung_.at(rung));
  }
  [[nodiscard]] std::size_t replica_on(std::size_t rung) const { return replica_on_rung_.at(rung); }
  [[nodiscard]] std::size_t rung_of(std::size_t replica) const {
    return rung_of_replica_.at(replica);
  }
  [[nodiscard]] const LadderStatistics& statistics() const noexcept { return stats_; }

  // Text snapshot of the replicas here, the rung assignment, the betas, the swap stream, the
  // tuning and the statistics. restore() accepts only a snapshot of a ladder with the same index,
  // rung count, map and district count that holds every replica here, and throws
  // std::invalid_argument otherwise (a rejected replica snapshot leaves the ladder unusable; a
  // rejected ladder header leaves it unchanged).
  [[nodiscard]] std::string save() const;
  void restore(std::string_view snapshot);
  // One snapshot of the whole ladder from the snapshots of its holders, which must agree on
  // everything but the replicas and hold each replica once. Throws std::invalid_argument.
  [[nodiscard]] static std::string combine_snapshots(std::span<const std::string> parts);

 private:
  void swap(std::span<const double> energy_by_replica);
  void tune_after_step();
  [[nodiscard]] std::string save_shared() const;
  void apply_betas() noexcept;
  void track_ends() noexcept;
  void respace(std::span<const std::uint64_t> attempts, std::span<const std::uint64_t> accepts);

  static constexpr std::uint64_t kNoTrip = std::numeric_limits<std::uint64_t>::max();
  static constexpr std::uint64_t kNoTune = std::numeric_limits<std::uint64_t>::max();
  enum Heading : std::uint8_t { kNone = 0, kUp = 1, kDown = 2 };

  std::uint64_t ladder_index_;
  std::uint64_t swap_every_;
  bool wrong_swap_sign_;
  std::vector<double> betas_;
  std::vector<std::optional<Chain>> replicas_;
  bool all_here_ = true;
  std::vector<std::uint32_t> replica_on_rung_;
  std::vector<std::uint32_t> rung_of_replica_;
  std::vector<double> energy_on_rung_;    // scratch for swap rounds
  std::vector<double> energy_of_replica_;  // scratch for step()
  std::vector<std::uint8_t> accepted_;  // scratch, per pair
  Rng rng_;
  std::uint64_t steps_ = 0, swap_rounds_ = 0;
  bool tuned_ = false;
  // Tuning: block ends at tune_start_ + b * tune_block_ (b = 1..tune_blocks_), freezing at
  // tune_end_; the swap counts when the current block began.
  std::uint64_t tune_start_ = 0, tune_end_ = kNoTune, tune_block_ = 0, tune_blocks_ = 0;
  std::vector<std::uint64_t> block_attempts_, block_accepts_;
  LadderStatistics stats_;
  std::vector<std::uint8_t> heading_;      // per replica
  std::vector<std::uint64_t> trip_start_;  // per replica: step its current round trip began
};

}  // namespace planmill
