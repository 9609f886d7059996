// Plan codec: exact round trips of every record kind on random plans over random graphs and on the
// plans of a real recombination chain; damaged graph records are refused.
#include "planmill/store/plan_codec.hpp"

#include <gtest/gtest.h>
#include <unistd.h>

#include <filesystem>
#include <random>

#include "planmill/chain/chain.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/synth/synth.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using Labels = std::vector<DistrictIndex>;

// Random undirected graph: a path (so most units have coded neighbours) plus random extra edges,
// some of them duplicated, listed in random order.
UnitAdjacency random_adjacency(std::size_t n, std::size_t extra_edges, std::mt19937& rng) {
  std::vector<std::vector<std::uint32_t>> lists(n);
  auto link = [&](std::size_t a, std::size_t b) {
    lists[a].push_back(static_cast<std::uint32_t>(b));
    lists[b].push_back(static_cast<std::uint32_t>(a));
  };
  for (std::size_t u = 1; u < n; ++u) link(u - 1, u);
  for (std::size_t e = 0; n > 1 && e < extra_edges; ++e) {
    const std::size_t a = rng() % n, b = rng() % n;
    if (a != b) link(a, b);
  }
  UnitAdjacency adjacency;
  adjacency.offsets.push_back(0);
  for (auto& list : lists) {
    std::shuffle(list.begin(), list.end(), rng);
    adjacency.neighbors.insert(adjacency.neighbors.end(), list.begin(), list.end());
    adjacency.offsets.push_back(adjacency.neighbors.size());
  }
  return adjacency;
}

Labels decode_graph(const std::vector<std::uint8_t>& bytes, std::size_t n, std::size_t k,
                    const UnitAdjacency& adjacency) {
  Labels plan(n, kNoDistrict);
  EXPECT_TRUE(decode_record(RecordKind::graph, bytes, label_width(k), k, plan, &adjacency));
  return plan;
}

// k > 512 takes the encoder's Fenwick-tree rank, smaller k the direct count: both must agree with
// the decoder, which always uses the tree.
TEST(PlanCodec, GraphRecordsRoundTripOnRandomPlans) {
  std::mt19937 rng(11);
  for (const auto& [n, k] : std::vector<std::pair<std::size_t, std::size_t>>{
           {1, 1}, {2, 2}, {50, 3}, {300, 40}, {2000, 255}, {1500, 700}, {3000, 2500}}) {
    const UnitAdjacency adjacency = random_adjacency(n, n, rng);
    ASSERT_TRUE(adjacency.valid_for(n));
    ChainEncoder encoder(n, k, &adjacency);
    for (int trial = 0; trial < 3; ++trial) {
      Labels plan(n);
      // trial 0: labels in stretches (like a plan); 1: uniform noise; 2: few labels used.
      for (std::size_t u = 0; u < n; ++u)
        plan[u] = static_cast<DistrictIndex>(trial == 0   ? (u * k / n + (rng() % 7 == 0)) % k
                                             : trial == 1 ? rng() % k
                                                          : rng() % std::min<std::size_t>(k, 3));
      std::vector<std::uint8_t> bytes;
      encoder.encode_graph(plan, bytes);
      ASSERT_EQ(decode_graph(bytes, n, k, adjacency), plan) << n << " " << k << " " << trial;
    }
  }
}

TEST(PlanCodec, DamagedGraphRecordsAreRefused) {
  std::mt19937 rng(12);
  const std::size_t n = 400, k = 9;
  const UnitAdjacency adjacency = random_adjacency(n, 300, rng);
  Labels plan(n);
  for (std::size_t u = 0; u < n; ++u) plan[u] = static_cast<DistrictIndex>(rng() % k);
  ChainEncoder encoder(n, k, &adjacency);
  std::vector<std::uint8_t> bytes;
  encoder.encode_graph(plan, bytes);
  Labels out(n);
  auto shorter = bytes;
  shorter.pop_back();
  EXPECT_FALSE(decode_record(RecordKind::graph, shorter, 1, k, out, &adjacency));
  auto longer = bytes;
  longer.push_back(0);
  EXPECT_FALSE(decode_record(RecordKind::graph, longer, 1, k, out, &adjacency));
  EXPECT_FALSE(decode_record(RecordKind::graph, bytes, 1, k, out, nullptr));  // no adjacency
  UnitAdjacency wrong = adjacency;
  wrong.neighbors[3] = static_cast<std::uint32_t>(n);  // not a unit
  EXPECT_FALSE(decode_record(RecordKind::graph, bytes, 1, k, out, &wrong));
  // Flipped bytes decode to something else or are refused, never to a label out of range.
  for (std::size_t i = 1; i < bytes.size(); i += 7) {
    auto flipped = bytes;
    flipped[i] ^= 0x5A;
    if (decode_record(RecordKind::graph, flipped, 1, k, out, &adjacency))
      for (DistrictIndex d : out) ASSERT_LT(d, k);
  }
}

TEST(PlanCodec, WrongLabelsThrowAndLeaveTheEncoderUsable) {
  std::mt19937 rng(13);
  const std::size_t n = 100, k = 4;
  const UnitAdjacency adjacency = random_adjacency(n, 50, rng);
  ChainEncoder encoder(n, k, &adjacency);
  Labels plan(n, 1);
  std::vector<std::uint8_t> bytes;
  EXPECT_EQ(encoder.encode(plan, false, bytes), RecordKind::graph);  // first plan: self-contained
  Labels bad = plan;
  bad[40] = 4;
  std::vector<std::uint8_t> scratch;
  EXPECT_THROW((void)encoder.encode(bad, false, scratch), std::invalid_argument);
  EXPECT_THROW((void)encoder.encode(bad, true, scratch), std::invalid_argument);
  Labels next = plan;
  next[40] = 2;
  bytes.clear();
  const RecordKind kind = encoder.encode(next, false, bytes);
  Labels decoded = plan;
  ASSERT_TRUE(decode_record(kind, bytes, 1, k, decoded, &adjacency));
  EXPECT_EQ(decoded, next);
}

// A recombination chain on a synth state: every record kind the encoder picks decodes exactly, in
// sequence, at recording intervals from 1 to 200 steps; and plans far apart cost under 1 bit per
// unit as graph records (the store's size target; the Shannon bound of a uniform choice among
// the ~20 labels would be log2(20) = 4.3 bits).
TEST(PlanCodec, RealChainRoundTripsAtEveryInterval) {
  const auto dir = fs::temp_directory_path() / ("planmill_codec_" + std::to_string(getpid()));
  (void)write_synthetic_state({2000, 20, 5, dir.string()});
  JobSpec job = load_job((dir / "job.toml").string());
  const GraphHandle graph_handle = share_graph(load_unit_graph(job.map));
  const UnitGraph& graph = *graph_handle;
  fs::remove_all(dir);
  RuleSet rules;
  rules.population_tolerance = 0.05;
  Rng rng = make_stream(5, 1);
  Plan start = random_seed_plan(graph_handle, 20, rules, rng);
  ChainSetup setup;
  setup.graph = graph_handle;
  setup.rules = rules;
  setup.kernel.kind = KernelKind::recombination;
  Chain chain(setup, start);
  const UnitAdjacency adjacency = unit_adjacency(graph);
  const std::size_t n = graph.unit_count();
  for (const std::size_t interval : {1, 7, 200}) {
    ChainEncoder encoder(n, 20, &adjacency);
    Labels decoded(n);
    std::size_t kinds_seen[kRecordKindCount] = {};
    for (std::size_t r = 0; r < 60; ++r) {
      for (std::size_t s = 0; s < interval; ++s) (void)chain.step();
      const auto plan = chain.state().plan.assignment();
      std::vector<std::uint8_t> bytes;
      const RecordKind kind = encoder.encode(plan, r % 16 == 0, bytes);
      ++kinds_seen[static_cast<std::size_t>(kind)];
      ASSERT_TRUE(decode_record(kind, bytes, 1, 20, decoded, &adjacency)) << interval << " " << r;
      ASSERT_TRUE(std::equal(decoded.begin(), decoded.end(), plan.begin())) << interval << " " << r;
      if (kind == RecordKind::graph) EXPECT_LT(8.0 * static_cast<double>(bytes.size()), n);
    }
    EXPECT_EQ(kinds_seen[static_cast<std::size_t>(RecordKind::full)], 0u);  // graph instead
    EXPECT_GE(kinds_seen[static_cast<std::size_t>(RecordKind::graph)], 4u);
  }
}

TEST(PlanCodec, AdjacencyValidation) {
  UnitAdjacency a;
  a.offsets = {0, 1, 2};
  a.neighbors = {1, 0};
  EXPECT_TRUE(a.valid_for(2));
  EXPECT_FALSE(a.valid_for(3));
  a.offsets = {0, 2, 1};
  EXPECT_FALSE(a.valid_for(2));  // decreasing
  a.offsets = {0, 1, 2};
  a.neighbors = {1, 2};
  EXPECT_FALSE(a.valid_for(2));  // unit 2 does not exist
}

}  // namespace
}  // namespace planmill
