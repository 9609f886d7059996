// The ladder: geometric rungs, statistics worked out by hand, exact save/restore, the pure swap
// round reproducing the ladder from separately held chains, tuning, and beta in chain snapshots.
#include "planmill/temper/ladder.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>

#include "planmill/seed/seed_plan.hpp"
#include "planmill/temper/ladder_summary.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

TEST(GeometricBetas, EqualRatiosAndExactEnds) {
  const auto b = geometric_betas(2.0, 0.02, 5);
  ASSERT_EQ(b.size(), 5u);
  EXPECT_EQ(b.front(), 2.0);
  EXPECT_EQ(b.back(), 0.02);
  // Ratio (0.02 / 2)^(1/4) = 0.01^(1/4) = 10^(-1/2).
  for (std::size_t r = 1; r < b.size(); ++r)
    EXPECT_NEAR(b[r] / b[r - 1], 1.0 / std::sqrt(10.0), 1e-12);
  EXPECT_THROW((void)geometric_betas(1.0, 0.0, 4), std::invalid_argument);
  EXPECT_THROW((void)geometric_betas(1.0, 2.0, 4), std::invalid_argument);
  EXPECT_THROW((void)geometric_betas(1.0, 0.5, 1), std::invalid_argument);
  EXPECT_THROW(check_betas(std::vector<double>{1.0, 1.0}), std::invalid_argument);
  EXPECT_NO_THROW(check_betas(std::vector<double>{1.0, 0.0}));
}

struct Fixture {
  GraphHandle graph = share_graph(test::grid(6, 6));
  RuleSet rules;
  Fixture() {
    rules.population_tolerance = 0.2;
    rules.cut_edges_weight = 0.5;
  }
  LadderSetup setup(KernelKind kind, std::vector<double> betas, std::uint64_t swap_every = 3) {
    LadderSetup s;
    s.chain = ChainSetup{graph, rules, {}, 21, 0};
    s.chain.kernel.kind = kind;
    s.chain.kernel.gamma = kind == KernelKind::merge_split ? 1.0 : 0.0;
    s.ladder_index = 2;
    s.first_chain_index = 8;
    s.betas = std::move(betas);
    s.swap_every = swap_every;
    return s;
  }
  Plan start() {
    Rng rng = make_stream(4, 0);
    return random_seed_plan(graph, 3, rules, rng);
  }
};

TEST(LadderStatistics, RoundTripsWorkedOutByHand) {
  // Zero energy: every proposed swap is accepted. Two rungs, a swap round after every step: the
  // pair is proposed in even rounds only, i.e. after steps 1, 3, 5, ... (worked out by hand).
  // Replica 0 starts on the target rung and is back there after steps 3, 7, ..., 999: 250 trips
  // of total length 3 + 249 * 4 = 999. Replica 1 reaches the target after step 1 and returns
  // after 5, 9, ..., 997: 249 trips of 4. Together 499 trips, mean 1995 / 499.
  Fixture f;
  f.rules.cut_edges_weight = 0.0;
  Ladder ladder(f.setup(KernelKind::flip, {1.0, 0.5}, 1), {f.start()});
  ladder.run(1000);
  const auto& s = ladder.statistics();
  EXPECT_EQ(s.swap_attempts[0], 500u);
  EXPECT_EQ(s.swap_accepts[0], 500u);
  EXPECT_EQ(s.round_trips, 499u);
  EXPECT_DOUBLE_EQ(s.mean_round_trip(), 1995.0 / 499.0);
  // Each replica spends steps 1-2 on one rung, 3-4 on the other, and so on: exactly half.
  EXPECT_DOUBLE_EQ(s.time_fraction(0, 0), 0.5);
  EXPECT_DOUBLE_EQ(s.time_fraction(1, 1), 0.5);
  // Whoever sits on the target rung has just come from the target end: all "up"; the hottest: all
  // "down" (Katzgraber et al. 2006's f(T) is 1 at the coldest and 0 at the hottest end).
  EXPECT_DOUBLE_EQ(s.up_fraction(0), 1.0);
  EXPECT_DOUBLE_EQ(s.up_fraction(1), 0.0);

  const auto summary = ladder_summary(ladder);
  EXPECT_EQ(summary["round_trips"], 499u);
  EXPECT_DOUBLE_EQ(summary["mean_round_trip_steps"].get<double>(), 1995.0 / 499.0);
  EXPECT_EQ(summary["pairs"][0]["accepted"], 500u);
  EXPECT_EQ(summary["time_on_rung"][1][1], 0.5);
  EXPECT_EQ(summary["betas"], (std::vector<double>{1.0, 0.5}));
  Ladder fresh(f.setup(KernelKind::flip, {1.0, 0.5}, 1), {f.start()});
  EXPECT_TRUE(ladder_summary(fresh)["pairs"][0]["acceptance"].is_null());  // nothing measured yet
}

TEST(LadderStatistics, TimeFractionsSumToOneAndRungsKeepTheirBetas) {
  Fixture f;
  Ladder ladder(f.setup(KernelKind::flip, geometric_betas(1.0, 0.1, 4)), {f.start()});
  ladder.run(3000);
  for (std::size_t i = 0; i < 4; ++i) {
    double sum = 0;
    for (std::size_t r = 0; r < 4; ++r) sum += ladder.statistics().time_fraction(i, r);
    EXPECT_NEAR(sum, 1.0, 1e-12);
  }
  for (std::size_t r = 0; r < 4; ++r) {
    EXPECT_EQ(ladder.on_rung(r).beta(), ladder.betas()[r]);
    EXPECT_EQ(ladder.rung_of(ladder.replica_on(r)), r);
    EXPECT_EQ(ladder.replica(r).chain_index(), 8u + r);
  }
  EXPECT_EQ(ladder.swap_rounds(), 1000u);
  std::uint64_t attempts = 0;
  for (auto a : ladder.statistics().swap_attempts) attempts += a;
  EXPECT_EQ(attempts, 1000u * 3 / 2);  // rounds alternate two pairs, one pair
}

class LadderKinds : public ::testing::TestWithParam<KernelKind> {};

TEST_P(LadderKinds, SaveRestoreMidRunEqualsAnUninterruptedLadder) {
  Fixture f;
  const auto setup = f.setup(GetParam(), geometric_betas(1.5, 0.2, 4));
  Ladder original(setup, {f.start()});
  original.tune(600, {3});
  original.run(401);  // stop between swap rounds
  const std::string snapshot = original.save();
  original.run(700);

  Ladder resumed(setup, {f.start()});
  resumed.restore(snapshot);
  EXPECT_EQ(resumed.save(), snapshot);
  resumed.run(700);
  for (std::size_t i = 0; i < 4; ++i) {
    EXPECT_TRUE(resumed.replica(i).state().plan == original.replica(i).state().plan) << i;
    EXPECT_EQ(resumed.rung_of(i), original.rung_of(i));
  }
  EXPECT_EQ(resumed.betas(), original.betas());
  EXPECT_EQ(resumed.statistics().round_trips, original.statistics().round_trips);
  EXPECT_EQ(resumed.save(), original.save());
}

INSTANTIATE_TEST_SUITE_P(Kernels, LadderKinds,
                         ::testing::Values(KernelKind::merge_split, KernelKind::flip));

TEST(Ladder, RejectsASnapshotOfAnotherLadder) {
  Fixture f;
  Ladder a(f.setup(KernelKind::flip, {1.0, 0.5, 0.25}), {f.start()});
  auto other = f.setup(KernelKind::flip, {1.0, 0.5});
  Ladder b(other, {f.start()});
  EXPECT_THROW(b.restore(a.save()), std::invalid_argument);
  EXPECT_THROW(b.restore("planmill-chain 2\n"), std::invalid_argument);
  std::string truncated = a.save();
  truncated.resize(truncated.size() / 2);
  Ladder c(f.setup(KernelKind::flip, {1.0, 0.5, 0.25}), {f.start()});
  EXPECT_THROW(c.restore(truncated), std::invalid_argument);
}

TEST(Ladder, SwapRoundOverSeparateChainsReproducesTheLadder) {
  // The pure swap round on chains held apart (energies gathered, one swap_round on the ladder's
  // own stream, betas sent back) must give the ladder's plans.
  Fixture f;
  const auto setup = f.setup(KernelKind::flip, geometric_betas(1.0, 0.1, 4), 2);
  Ladder ladder(setup, {f.start()});
  std::vector<Chain> chains;
  for (std::size_t i = 0; i < 4; ++i) {
    ChainSetup c = setup.chain;
    c.chain_index = setup.first_chain_index + i;
    c.kernel.beta = setup.betas[i];
    chains.emplace_back(c, f.start());
  }
  Rng swap_rng = make_stream(setup.chain.run_seed, ladder_stream_key(setup.ladder_index));
  std::vector<std::uint32_t> on_rung{0, 1, 2, 3};
  std::vector<double> energy(4);
  std::vector<std::uint8_t> accepted(3);
  std::uint64_t round = 0;
  for (std::uint64_t step = 1; step <= 2000; ++step) {
    ladder.step();
    for (auto& c : chains) c.step();
    if (step % setup.swap_every != 0) continue;
    for (std::size_t r = 0; r < 4; ++r)
      energy[r] = chains[on_rung[r]].state().rules.energy(chains[on_rung[r]].state().plan);
    (void)swap_round({setup.betas, round++}, energy, on_rung, accepted, swap_rng);
    for (std::size_t r = 0; r < 4; ++r) chains[on_rung[r]].set_beta(setup.betas[r]);
  }
  for (std::size_t i = 0; i < 4; ++i)
    EXPECT_TRUE(chains[i].state().plan == ladder.replica(i).state().plan) << i;
  for (std::size_t r = 0; r < 4; ++r) EXPECT_EQ(on_rung[r], ladder.replica_on(r));
  EXPECT_GT(ladder.statistics().swap_accepts[0], 0u);
}

// Parts of one ladder held apart, as ranks hold them: each steps its replicas, the parts add
// their energy vectors (zeros elsewhere) and every part runs the same swap round.
struct SpreadLadder {
  std::vector<Ladder> parts;
  std::vector<double> sum, mine;
  SpreadLadder(LadderSetup setup, const std::vector<std::vector<bool>>& holdings, const Plan& start) {
    for (const auto& here : holdings) {
      setup.here = here;
      parts.emplace_back(setup, std::vector<Plan>{start});
    }
    sum.resize(setup.betas.size());
    mine.resize(sum.size());
  }
  void step() {
    for (auto& p : parts) p.step_replicas();
    if (parts.front().swap_due()) {
      std::fill(sum.begin(), sum.end(), 0.0);
      for (auto& p : parts) {
        p.local_energies(mine);
        for (std::size_t i = 0; i < sum.size(); ++i) sum[i] += mine[i];
      }
    }
    for (auto& p : parts) p.finish_step(sum);
  }
  [[nodiscard]] std::string combined() const {
    std::vector<std::string> snapshots;
    for (const auto& p : parts) snapshots.push_back(p.save());
    return Ladder::combine_snapshots(snapshots);
  }
  [[nodiscard]] const Chain& replica(std::size_t i) const {
    for (const auto& p : parts) {
      if (p.holds(i)) return p.replica(i);
    }
    throw std::logic_error("nobody holds it");
  }
};

TEST(Ladder, PartsHeldApartReproduceTheLadderThroughTuningAndRestore) {
  Fixture f;
  const auto setup = f.setup(KernelKind::flip, geometric_betas(1.5, 0.1, 4), 2);
  const std::vector<std::vector<bool>> holdings{
      {true, true, false, false}, {false, false, true, false}, {false, false, false, true}};
  Ladder whole(setup, {f.start()});
  SpreadLadder spread(setup, holdings, f.start());
  whole.start_tuning(900, {3});
  for (auto& p : spread.parts) p.start_tuning(900, {3});
  for (int s = 0; s < 1301; ++s) whole.step(), spread.step();  // tuning ends, then a stretch
  ASSERT_TRUE(whole.tuned());
  EXPECT_NE(whole.betas(), setup.betas);  // the inner rungs moved
  EXPECT_EQ(spread.combined(), whole.save());
  EXPECT_THROW((void)spread.parts[1].replica(0), std::logic_error);
  EXPECT_THROW(spread.parts[0].step(), std::logic_error);

  // Every part restores from the combined snapshot and the parts go on as the whole ladder does.
  SpreadLadder resumed(setup, holdings, f.start());
  for (auto& p : resumed.parts) p.restore(whole.save());
  for (int s = 0; s < 777; ++s) whole.step(), resumed.step();
  for (std::size_t i = 0; i < 4; ++i) {
    EXPECT_TRUE(resumed.replica(i).state().plan == whole.replica(i).state().plan) << i;
    EXPECT_EQ(resumed.parts[2].rung_of(i), whole.rung_of(i));
  }
  EXPECT_GT(whole.statistics().swap_accepts[1], 0u);
  EXPECT_EQ(resumed.combined(), whole.save());
}

TEST(Ladder, TuningInterruptedBySaveAndRestoreEqualsTuningInOneGo) {
  Fixture f;
  const auto setup = f.setup(KernelKind::flip, {2.0, 1.95, 1.9, 0.05}, 1);
  Ladder in_one_go(setup, {f.start()});
  in_one_go.tune(1000, {4});
  Ladder interrupted(setup, {f.start()});
  interrupted.start_tuning(1000, {4});
  interrupted.run(370);  // inside the second block
  Ladder resumed(setup, {f.start()});
  resumed.restore(interrupted.save());
  EXPECT_TRUE(resumed.tuning());
  resumed.run(630);
  EXPECT_FALSE(resumed.tuning());
  EXPECT_TRUE(resumed.tuned());
  EXPECT_EQ(resumed.save(), in_one_go.save());
}

TEST(Ladder, SnapshotPartsThatDoNotFitAreRefused) {
  Fixture f;
  auto setup = f.setup(KernelKind::flip, {1.0, 0.5, 0.25});
  SpreadLadder spread(setup, {{true, false, false}, {false, true, true}}, f.start());
  for (int s = 0; s < 10; ++s) spread.step();
  const std::string a = spread.parts[0].save(), b = spread.parts[1].save();
  EXPECT_THROW((void)Ladder::combine_snapshots(std::vector<std::string>{a}), std::invalid_argument);
  EXPECT_THROW((void)Ladder::combine_snapshots(std::vector<std::string>{a, b, a}),
               std::invalid_argument);
  spread.parts[1].step_replicas();  // one part a step ahead: the shared parts differ
  spread.parts[1].finish_step(spread.sum);
  EXPECT_THROW((void)Ladder::combine_snapshots(std::vector<std::string>{a, spread.parts[1].save()}),
               std::invalid_argument);
  // A part's own snapshot lacks the other replicas, so a whole ladder cannot restore from it.
  Ladder whole(setup, {f.start()});
  EXPECT_THROW(whole.restore(a), std::invalid_argument);
  setup.here = {false, false, false};
  EXPECT_THROW(Ladder(setup, {f.start()}), std::invalid_argument);
}

TEST(LadderReport, WarnsOfAPairThatRarelySwapsAndOfNoRoundTrips) {
  // A crowded ladder: the last pair (1.9 -> 0.05) swaps in about 1% of attempts (see the tuning
  // test below), the others in about 96%.
  Fixture f;
  f.rules.cut_edges_weight = 1.0;
  Ladder crowded(f.setup(KernelKind::flip, {2.0, 1.95, 1.9, 0.05}, 1), {f.start()});
  crowded.run(20000);
  const LadderReport report = describe_ladder(ladder_summary(crowded));
  EXPECT_NE(report.line.find("ladder 2: betas 2.000 1.950 1.900 0.050"), std::string::npos)
      << report.line;
  ASSERT_EQ(report.warnings.size(), 1U) << report.line;
  EXPECT_NE(report.warnings[0].find("rungs 2 and 3"), std::string::npos) << report.warnings[0];

  Ladder tuned(f.setup(KernelKind::flip, {2.0, 1.95, 1.9, 0.05}, 1), {f.start()});
  tuned.tune(20000, {8});
  tuned.run(20000);
  EXPECT_TRUE(describe_ladder(ladder_summary(tuned)).warnings.empty());

  // Worked by hand: 3 pairs with 600 attempts each are about 1,200 rounds (rounds alternate
  // between 2 pairs and 1), no swap accepted, so no round trip either.
  nlohmann::json stuck = ladder_summary(crowded);
  for (auto& pair : stuck["pairs"]) pair["attempts"] = 600, pair["accepted"] = 0, pair["acceptance"] = 0.0;
  stuck["round_trips"] = 0;
  stuck["mean_round_trip_steps"] = nullptr;
  const LadderReport none = describe_ladder(stuck);
  ASSERT_EQ(none.warnings.size(), 4U);
  EXPECT_NE(none.warnings[3].find("no replica went from the target rung to the hottest and back in "
                                  "1200 swap rounds"),
            std::string::npos)
      << none.warnings[3];
  stuck["pairs"][0]["attempts"] = 100;  // too few attempts to judge that pair, and fewer rounds
  stuck["pairs"][1]["attempts"] = 100;
  stuck["pairs"][2]["attempts"] = 100;
  EXPECT_TRUE(describe_ladder(stuck).warnings.empty());
}

TEST(Ladder, TuningEqualisesNeighbourAcceptanceAndFreezes) {
  // Start from a badly spaced ladder (three rungs crowded near the target). After tuning the
  // spread of pair acceptances, measured on a fresh stretch, must be far smaller than before.
  Fixture f;
  f.rules.cut_edges_weight = 1.0;
  const std::vector<double> crowded{2.0, 1.95, 1.9, 0.05};
  auto spread = [](const LadderStatistics& s) {
    double lo = 1, hi = 0;
    for (std::size_t r = 0; r < s.swap_attempts.size(); ++r) {
      lo = std::min(lo, s.swap_acceptance(r));
      hi = std::max(hi, s.swap_acceptance(r));
    }
    return hi - lo;
  };
  Ladder untuned(f.setup(KernelKind::flip, crowded, 1), {f.start()});
  untuned.run(20000);
  Ladder tuned(f.setup(KernelKind::flip, crowded, 1), {f.start()});
  tuned.tune(20000, {8});
  EXPECT_TRUE(tuned.tuned());
  EXPECT_EQ(tuned.statistics().swap_attempts[0], 0u);  // statistics start afresh
  const auto frozen = tuned.betas();
  EXPECT_EQ(frozen.front(), 2.0);
  EXPECT_EQ(frozen.back(), 0.05);
  tuned.run(20000);
  EXPECT_EQ(tuned.betas(), frozen);
  auto show = [](const char* what, const Ladder& l) {
    std::printf("  %s: betas", what);
    for (double b : l.betas()) std::printf(" %.3f", b);
    std::printf(", acceptance");
    for (std::size_t r = 0; r + 1 < l.rungs(); ++r)
      std::printf(" %.3f", l.statistics().swap_acceptance(r));
    std::printf(", round trips %llu\n",
                static_cast<unsigned long long>(l.statistics().round_trips));
  };
  show("untuned", untuned);
  show("tuned", tuned);
  // Binomial sd of each acceptance with ~6,700-10,000 attempts is below 0.006, but the tuned
  // ladder itself varies with the start plan: over start streams (1..12, 0) the tuned spread was
  // 0.02 to 0.14 (0.141 for this one since issue 18 changed the trees behind the seed plan), so
  // the bound is 0.2, still a fifth of the untuned spread (0.96).
  EXPECT_GT(spread(untuned.statistics()), 0.3);
  EXPECT_LT(spread(tuned.statistics()), 0.2) << frozen[1] << " " << frozen[2];
}

TEST(ChainBeta, SnapshotCarriesBetaAndFormatOneMeansTheSetupBeta) {
  Fixture f;
  ChainSetup s{f.graph, f.rules, {}, 5, 0};
  s.kernel.kind = KernelKind::flip;
  s.kernel.beta = 0.7;
  Chain a(s, f.start());
  a.set_beta(0.25);
  for (int i = 0; i < 100; ++i) a.step();
  Chain b(s, f.start());
  b.restore(a.save());
  EXPECT_EQ(b.beta(), 0.25);
  for (int i = 0; i < 200; ++i) {
    a.step();
    b.step();
  }
  EXPECT_TRUE(a.state().plan == b.state().plan);
  // A format-1 snapshot (no beta field) restores to the setup's beta.
  std::string old = a.save();
  const auto header_end = old.find('\n', old.find('\n') + 1);
  std::string header = old.substr(0, header_end);
  header =
      "planmill-chain 1" + header.substr(header.find('\n'), header.rfind(' ') - header.find('\n'));
  Chain c(s, f.start());
  c.set_beta(3.0);
  c.restore(header + old.substr(header_end));
  EXPECT_EQ(c.beta(), 0.7);
  EXPECT_TRUE(c.state().plan == a.state().plan);
}

}  // namespace
}  // namespace planmill
