#pragma once
// A ladder: R replicas (chains) of one job at inverse temperatures b_0 = target > b_1 > ... >
// b_{R-1} = hottest. Every replica takes one kernel step per ladder step; every swap_every steps
// neighbouring rungs propose swaps (temper/swap.hpp). A swap exchanges rung labels and energies,
// never plans: each replica keeps its plan and only its beta changes. The replica on rung 0
// samples the target law, exp(-b_0 E) (flip) or prod tau^gamma exp(-b_0 E) (merge-split).
//
// Randomness: replica i is chain first_chain_index + i with its own stream; swap decisions use the
// ladder's stream (run seed, ladder_stream_key(ladder index)), so results do not depend on where
// replicas run. save()/restore() round-trip everything exactly. step() allocates nothing.
#include <cstdint>
#include <limits>
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
  // starts: one plan per replica, or a single plan every replica starts from. Replica i starts
  // on rung i. Throws std::invalid_argument on bad betas, swap_every 0 or a wrong start count.
  Ladder(const LadderSetup& setup, std::vector<Plan> starts);

  // One kernel step of every replica, then a swap round if the step count is a multiple of
  // swap_every.
  void step();
  void run(std::uint64_t steps) {
    for (std::uint64_t s = 0; s < steps; ++s) step();
  }
  // Runs `steps` ladder steps adapting the inner betas (see TuneSettings), then freezes them and
  // clears the statistics. With two rungs nothing is adapted (there is no inner rung).
  void tune(std::uint64_t steps, const TuneSettings& settings = {});
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
  [[nodiscard]] const Chain& replica(std::size_t i) const { return replicas_.at(i); }
  [[nodiscard]] const Chain& on_rung(std::size_t rung) const {
    return replicas_.at(replica_on_rung_.at(rung));
  }
  [[nodiscard]] std::size_t replica_on(std::size_t rung) const { return replica_on_rung_.at(rung); }
  [[nodiscard]] std::size_t rung_of(std::size_t replica) const {
    return rung_of_replica_.at(replica);
  }
  [[nodiscard]] const LadderStatistics& statistics() const noexcept { return stats_; }

  // Text snapshot of every replica, the rung assignment, the betas, the swap stream and the
  // statistics. restore() accepts only a snapshot of a ladder with the same index, rung count,
  // map and district count, and throws std::invalid_argument otherwise (a rejected replica
  // snapshot leaves the ladder unusable; a rejected ladder header leaves it unchanged).
  [[nodiscard]] std::string save() const;
  void restore(std::string_view snapshot);

 private:
  void swap();
  void apply_betas() noexcept;
  void track_ends() noexcept;
  void respace(std::span<const std::uint64_t> attempts, std::span<const std::uint64_t> accepts);

  static constexpr std::uint64_t kNoTrip = std::numeric_limits<std::uint64_t>::max();
  enum Heading : std::uint8_t { kNone = 0, kUp = 1, kDown = 2 };

  std::uint64_t ladder_index_;
  std::uint64_t swap_every_;
  bool wrong_swap_sign_;
  std::vector<double> betas_;
  std::vector<Chain> replicas_;
  std::vector<std::uint32_t> replica_on_rung_;
  std::vector<std::uint32_t> rung_of_replica_;
  std::vector<double> energy_on_rung_;  // scratch for swap rounds
  std::vector<std::uint8_t> accepted_;  // scratch, per pair
  Rng rng_;
  std::uint64_t steps_ = 0, swap_rounds_ = 0;
  bool tuned_ = false;
  LadderStatistics stats_;
  std::vector<std::uint8_t> heading_;      // per replica
  std::vector<std::uint64_t> trip_start_;  // per replica: step its current round trip began
};

}  // namespace planmill
