// Recording with a changed-unit list (Plan::changes()): the bytes equal those of the writer that
// compares every unit, and every plan decodes exactly, on random sequences with padded lists and
// on a real recombination chain whose list sometimes overflows.
#include <gtest/gtest.h>
#include <unistd.h>

#include <filesystem>
#include <random>

#include "planmill/chain/chain.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/store/ensemble.hpp"
#include "planmill/store/plan_codec.hpp"
#include "planmill/synth/synth.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using Labels = std::vector<DistrictIndex>;

// Random changes between records: two-district swaps of stretches, single units, nothing. The
// list handed to the encoder holds every changed unit, in random order, with repeats and
// unchanged units mixed in.
TEST(ChangeHint, SameBytesAsTheFullComparisonOnRandomSequences) {
  std::mt19937 rng(17);
  for (const auto& [n, k] : std::vector<std::pair<std::size_t, std::size_t>>{
           {1, 1}, {63, 3}, {64, 5}, {1000, 12}, {3000, 300}}) {
    ChainEncoder plain(n, k, nullptr), hinted(n, k, nullptr);
    Labels plan(n), decoded(n);
    for (std::size_t u = 0; u < n; ++u) plan[u] = static_cast<DistrictIndex>(u * k / n);
    std::vector<UnitIndex> list;
    std::size_t delta_records = 0;
    for (std::size_t r = 0; r < 300; ++r) {
      list.clear();
      const auto a = static_cast<DistrictIndex>(rng() % k),
                 b = static_cast<DistrictIndex>(rng() % k);
      switch (rng() % 3) {
        case 0: {
          const std::size_t from = rng() % n, length = 1 + rng() % std::min<std::size_t>(n, 80);
          for (std::size_t u = from; u < std::min(n, from + length); ++u)
            if (plan[u] == a || plan[u] == b) {
              plan[u] = plan[u] == a ? b : a;
              list.push_back(static_cast<UnitIndex>(u));
            }
          break;
        }
        case 1: {
          const auto u = static_cast<UnitIndex>(rng() % n);
          plan[u] = a;
          list.push_back(u);
          break;
        }
        default:
          break;
      }
      const std::size_t padding = rng() % 20;
      for (std::size_t i = 0; i < padding; ++i) list.push_back(static_cast<UnitIndex>(rng() % n));
      if (!list.empty()) list.push_back(list.front());  // a repeat
      std::shuffle(list.begin(), list.end(), rng);
      std::vector<std::uint8_t> expected, got;
      const bool self_contained = r % 50 == 0;
      const RecordKind kind = plain.encode(plan, self_contained, expected);
      ASSERT_EQ(hinted.encode(plan, list, self_contained, got), kind) << n << " " << r;
      ASSERT_EQ(got, expected) << n << " " << r;
      ASSERT_TRUE(decode_record(kind, got, label_width(k), k, decoded)) << n << " " << r;
      ASSERT_EQ(decoded, plan) << n << " " << r;
      delta_records += !is_self_contained(kind);
    }
    EXPECT_GT(delta_records, 200u);
  }
}

TEST(ChangeHint, BadUnitOrLabelThrowsAndTheEncoderStaysUsable) {
  constexpr std::size_t n = 200, k = 4;
  ChainEncoder encoder(n, k, nullptr);
  Labels plan(n, 0), decoded(n);
  std::vector<std::uint8_t> bytes;
  (void)encoder.encode(plan, true, bytes);
  ASSERT_TRUE(decode_record(RecordKind::full, bytes, 1, k, decoded));
  plan[5] = 9;
  const std::vector<UnitIndex> listed = {5};
  bytes.clear();
  EXPECT_THROW((void)encoder.encode(plan, listed, false, bytes), std::invalid_argument);
  const std::vector<UnitIndex> outside = {5, static_cast<UnitIndex>(n)};
  plan[5] = 2;
  EXPECT_THROW((void)encoder.encode(plan, outside, false, bytes), std::invalid_argument);
  bytes.clear();
  plan[6] = 3;
  const std::vector<UnitIndex> both = {6, 5};
  const RecordKind kind = encoder.encode(plan, both, false, bytes);
  ASSERT_TRUE(decode_record(kind, bytes, 1, k, decoded));
  EXPECT_EQ(decoded, plan);
}

// A recombination chain recorded twice, with and without its list: identical byte counts, every
// plan read back equals the chain's, and both the listed path and the overflow path are taken.
TEST(ChangeHint, RealChainRecordsExactlyWithAndWithoutTheList) {
  const auto dir = fs::temp_directory_path() / ("planmill_hint_" + std::to_string(getpid()));
  (void)write_synthetic_state({2000, 20, 5, dir.string()});
  JobSpec job = load_job((dir / "job.toml").string());
  const GraphHandle graph_handle = share_graph(load_unit_graph(job.map));
  const UnitGraph& graph = *graph_handle;
  fs::remove_all(dir);
  RuleSet rules;
  rules.population_tolerance = 0.05;
  Rng rng = make_stream(5, 2);
  ChainSetup setup;
  setup.graph = graph_handle;
  setup.rules = rules;
  setup.kernel.kind = KernelKind::recombination;
  Chain chain(setup, random_seed_plan(graph_handle, 20, rules, rng));
  const std::size_t n = graph.unit_count();
  const fs::path hinted_path =
      fs::temp_directory_path() / ("planmill_hint_" + std::to_string(getpid()) + "_with.h5");
  const fs::path plain_path =
      fs::temp_directory_path() / ("planmill_hint_" + std::to_string(getpid()) + "_without.h5");
  std::vector<Labels> recorded;
  std::size_t listed = 0, overflowed = 0;
  {
    const EnsembleHeader header{n, 20, "job", unit_adjacency(graph)};
    EnsembleWriter with(hinted_path.string(), header, {.full_every = 16});
    EnsembleWriter without(plain_path.string(), header, {.full_every = 16});
    const std::size_t h = with.add_chain(0, {}), p = without.add_chain(0, {});
    std::uint64_t step = 0;
    // Intervals 1 and 3 keep the list (capacity 500); 40 steps of a 20-district chain overflow.
    for (const std::size_t interval : {1, 3, 40, 1}) {
      for (std::size_t r = 0; r < 50; ++r) {
        for (std::size_t s = 0; s < interval; ++s, ++step) (void)chain.step();
        const Plan& plan = chain.state().plan;
        const PlanChanges changes = plan.changes();
        (changes.overflowed ? overflowed : listed) += 1;
        with.record(h, step, plan.assignment(), {}, changes);
        without.record(p, step, plan.assignment(), {});
        chain.clear_plan_changes();
        recorded.emplace_back(plan.assignment().begin(), plan.assignment().end());
      }
    }
    with.close();
    without.close();
    EXPECT_EQ(with.encoded_bytes(), without.encoded_bytes());
  }
  EXPECT_GT(listed, 100u);
  EXPECT_GT(overflowed, 10u);
  for (const fs::path& path : {hinted_path, plain_path}) {
    EnsembleReader reader(path.string());
    EXPECT_TRUE(reader.verify().empty());
    ASSERT_EQ(reader.record_count(0), recorded.size());
    std::size_t seen = 0;
    reader.for_each_plan(
        0, 0, recorded.size() - 1, [&](std::size_t r, std::span<const DistrictIndex> plan) {
          ASSERT_TRUE(std::equal(plan.begin(), plan.end(), recorded[r].begin(), recorded[r].end()))
              << path << " record " << r;
          ++seen;
        });
    EXPECT_EQ(seen, recorded.size());
    fs::remove(path);
  }
}

}  // namespace
}  // namespace planmill
