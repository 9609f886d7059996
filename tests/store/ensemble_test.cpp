// Ensemble files: exact round trips of random plan sequences, and verify() on damaged files.
#include "planmill/store/ensemble.hpp"

#include <gtest/gtest.h>
#include <hdf5.h>
#include <unistd.h>

#include <cmath>
#include <filesystem>
#include <limits>
#include <fstream>
#include <random>

#include "planmill/store/hdf5_handle.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using Plans = std::vector<std::vector<DistrictIndex>>;

fs::path temp_file(const std::string& name) {
  return fs::temp_directory_path() /
         ("planmill_store_" + std::to_string(getpid()) + "_" + name + ".h5");
}

// A sequence mixing the changes a chain makes: two-district relabelings of contiguous stretches,
// single-unit moves, unchanged plans and arbitrary scattered changes.
Plans random_sequence(std::size_t units, std::size_t k, std::size_t count, std::uint32_t seed) {
  std::mt19937 rng(seed);
  auto pick = [&](std::size_t n) { return static_cast<std::size_t>(rng() % n); };
  std::vector<DistrictIndex> plan(units);
  for (std::size_t u = 0; u < units; ++u) plan[u] = static_cast<DistrictIndex>(u * k / units);
  Plans plans{plan};
  for (std::size_t i = 1; i < count; ++i) {
    switch (pick(4)) {
      case 0: {  // relabel units of districts a, b between them
        const auto a = plan[pick(units)], b = static_cast<DistrictIndex>(pick(k));
        for (auto& d : plan)
          if ((d == a || d == b) && pick(3) == 0) d = d == a ? b : a;
        break;
      }
      case 1:
        plan[pick(units)] = static_cast<DistrictIndex>(pick(k));
        break;
      case 2:
        break;
      default:
        for (std::size_t j = pick(units); j > 0; --j)
          plan[pick(units)] = static_cast<DistrictIndex>(pick(k));
    }
    plans.push_back(plan);
  }
  return plans;
}

// Units on a strip 10 wide, neighbours across and along.
UnitAdjacency strip_adjacency(std::size_t units) {
  UnitAdjacency a;
  a.offsets.push_back(0);
  for (std::size_t u = 0; u < units; ++u) {
    for (std::size_t v : {u - 10, u - 1, u + 1, u + 10})
      if (v < units) a.neighbors.push_back(static_cast<std::uint32_t>(v));
    a.offsets.push_back(a.neighbors.size());
  }
  return a;
}

void write_file(const fs::path& path, std::size_t units, std::size_t k,
                const std::vector<Plans>& chains, EnsembleWriterOptions options = {},
                UnitAdjacency adjacency = {}) {
  EnsembleWriter writer(path.string(), {units, k, "name = \"test\"\n", std::move(adjacency)},
                        options);
  for (std::size_t c = 0; c < chains.size(); ++c) {
    const std::size_t h = writer.add_chain(c, {"index", "first_label"});
    for (std::size_t r = 0; r < chains[c].size(); ++r) {
      const double obs[] = {static_cast<double>(r) + 0.5 * static_cast<double>(c),
                            chains[c][r][0] * 1.25};
      writer.record(h, 10 * r, chains[c][r], obs);
    }
    writer.set_counters(h, {chains[c].size(), 3, 2, 1, c});
  }
  writer.close();
}

void expect_round_trip(std::size_t units, std::size_t k, std::size_t full_every, std::uint32_t seed,
                       bool with_adjacency = false) {
  const fs::path path = temp_file("round_trip_" + std::to_string(seed));
  const std::vector<Plans> chains = {random_sequence(units, k, 300, seed),
                                     random_sequence(units, k, 77, seed + 1)};
  const UnitAdjacency adjacency = with_adjacency ? strip_adjacency(units) : UnitAdjacency{};
  write_file(path, units, k, chains, {full_every, 512, 4}, adjacency);
  EnsembleReader reader(path.string());
  EXPECT_EQ(reader.format_version(), kEnsembleFormatVersion);
  EXPECT_EQ(reader.header().adjacency.offsets, adjacency.offsets);
  EXPECT_EQ(reader.header().adjacency.neighbors, adjacency.neighbors);
  EXPECT_EQ(reader.header().unit_count, units);
  EXPECT_EQ(reader.header().district_count, k);
  EXPECT_EQ(reader.header().job_text, "name = \"test\"\n");
  ASSERT_EQ(reader.chains(), (std::vector<std::uint64_t>{0, 1}));
  for (std::size_t c = 0; c < chains.size(); ++c) {
    ASSERT_EQ(reader.record_count(c), chains[c].size());
    for (std::size_t r = 0; r < chains[c].size(); ++r)
      ASSERT_EQ(reader.read_plan(c, r), chains[c][r]) << r;
    std::size_t next = 3;
    reader.for_each_plan(
        c, 3, chains[c].size() - 1, [&](std::size_t r, std::span<const DistrictIndex> plan) {
          ASSERT_EQ(r, next++);
          ASSERT_TRUE(
              std::equal(plan.begin(), plan.end(), chains[c][r].begin(), chains[c][r].end()))
              << r;
        });
    EXPECT_EQ(next, chains[c].size());
    EXPECT_THROW(reader.for_each_plan(c, 0, chains[c].size(), [](auto, auto) {}),
                 std::out_of_range);
    EXPECT_EQ(reader.observable_names(c), (std::vector<std::string>{"index", "first_label"}));
    const auto obs = reader.read_observables(c);
    ASSERT_EQ(obs.size(), 2 * chains[c].size());
    EXPECT_EQ(obs[2 * 5], 5 + 0.5 * static_cast<double>(c));
    EXPECT_EQ(reader.record_steps(c).at(7), 70u);
    EXPECT_EQ(reader.counters(c).invalid, c);
    EXPECT_EQ(reader.counters(c).steps, chains[c].size());
  }
  EXPECT_TRUE(reader.verify().empty());
  fs::remove(path);
}

TEST(EnsembleStore, RoundTripUint8Labels) { expect_round_trip(500, 12, 64, 1); }
TEST(EnsembleStore, RoundTripEveryRecordFull) { expect_round_trip(200, 7, 1, 2); }
TEST(EnsembleStore, RoundTripUint16Labels) { expect_round_trip(600, 300, 16, 3); }
TEST(EnsembleStore, RoundTripLargeK) { expect_round_trip(70000, 40000, 5, 4); }
TEST(EnsembleStore, RoundTripWithAdjacency) { expect_round_trip(500, 12, 64, 5, true); }
TEST(EnsembleStore, RoundTripWithAdjacencyEveryRecordSelfContained) {
  expect_round_trip(300, 7, 1, 6, true);
}
TEST(EnsembleStore, RoundTripWithAdjacencyManyLabels) {
  expect_round_trip(3000, 1000, 16, 7, true);
}

TEST(EnsembleStore, WrongAdjacencyOrLabelIsRefused) {
  const fs::path path = temp_file("refused");
  UnitAdjacency bad = strip_adjacency(50);
  EXPECT_THROW(EnsembleWriter(path.string(), {60, 3, "", bad}), std::invalid_argument);
  {
    EnsembleWriter writer(path.string(), {50, 3, "", bad});
    const std::size_t h = writer.add_chain(0, {});
    std::vector<DistrictIndex> plan(50, 2);
    writer.record(h, 0, plan, {});
    plan[7] = 3;
    EXPECT_THROW(writer.record(h, 1, plan, {}), std::invalid_argument);
    plan[7] = 1;
    writer.record(h, 2, plan, {});
    writer.close();
  }
  EnsembleReader reader(path.string());
  ASSERT_EQ(reader.record_count(0), 2u);
  EXPECT_EQ(reader.read_plan(0, 1)[7], 1);
  EXPECT_TRUE(reader.verify().empty());
  fs::remove(path);
}

// Sorted vectors: one dataset per name, records x width, across several buffer flushes (the index
// writes every 1024 records), beside the observables; a wrong size and an unknown name refused.
TEST(EnsembleStore, SortedVectorsRoundTripPerRecord) {
  const fs::path path = temp_file("sorted");
  constexpr std::size_t kRecords = 2500, kWidth = 3;
  const auto value = [](std::size_t r, std::size_t v, std::size_t i) {
    return r == 7 && i == 2 ? std::numeric_limits<double>::quiet_NaN()
                            : static_cast<double>(r) + 0.1 * static_cast<double>(v) + 0.01 * static_cast<double>(i);
  };
  {
    EnsembleWriter writer(path.string(), {20, 3, "", {}});
    const std::size_t h = writer.add_chain(4, {"x"}, {"e.sorted_shares", "g.sorted_shares"}, kWidth);
    const std::size_t plain = writer.add_chain(5, {"x"});
    std::vector<DistrictIndex> plan(20, 1);
    std::vector<double> sorted(2 * kWidth);
    for (std::size_t r = 0; r < kRecords; ++r) {
      for (std::size_t v = 0; v < 2; ++v)
        for (std::size_t i = 0; i < kWidth; ++i) sorted[v * kWidth + i] = value(r, v, i);
      const double x = static_cast<double>(r);
      writer.record(h, r, plan, std::span<const double>(&x, 1), PlanChanges{}, sorted);
      if (r == 0) writer.record(plain, r, plan, std::span<const double>(&x, 1));
    }
    const double x = 0;
    sorted.pop_back();
    EXPECT_THROW(writer.record(h, 0, plan, std::span<const double>(&x, 1), PlanChanges{}, sorted),
                 std::invalid_argument);
    writer.close();
  }
  EnsembleReader reader(path.string());
  EXPECT_EQ(reader.sorted_names(4), (std::vector<std::string>{"e.sorted_shares", "g.sorted_shares"}));
  EXPECT_TRUE(reader.sorted_names(5).empty());
  EXPECT_EQ(reader.record_count(4), kRecords);
  for (std::size_t v = 0; v < 2; ++v) {
    const auto rows = reader.read_sorted(4, v == 0 ? "e.sorted_shares" : "g.sorted_shares");
    ASSERT_EQ(rows.size(), kRecords * kWidth);
    for (std::size_t r = 0; r < kRecords; ++r)
      for (std::size_t i = 0; i < kWidth; ++i) {
        const double want = value(r, v, i), got = rows[r * kWidth + i];
        ASSERT_TRUE(std::isnan(want) ? std::isnan(got) : got == want) << v << " " << r << " " << i;
      }
  }
  EXPECT_EQ(reader.read_observables(4)[kRecords - 1], static_cast<double>(kRecords - 1));
  EXPECT_THROW((void)reader.read_sorted(4, "nope"), std::out_of_range);
  EXPECT_TRUE(reader.verify().empty());
  fs::remove(path);
}

TEST(PlanCodec, PairChangeIsSmall) {
  std::vector<DistrictIndex> before(10000), after;
  for (std::size_t u = 0; u < before.size(); ++u) before[u] = static_cast<DistrictIndex>(u / 100);
  after = before;
  for (std::size_t u = 150; u < 250; u += 3)
    after[u] = after[u] == 1 ? 2 : 1;  // scattered, two districts
  std::vector<std::uint8_t> out;
  ChainEncoder encoder(before.size(), 100, nullptr);
  EXPECT_EQ(encoder.encode(before, true, out), RecordKind::full);
  out.clear();
  EXPECT_EQ(encoder.encode(after, false, out), RecordKind::pair);
  EXPECT_EQ(out.size(), 2u + 200u / 8u);  // two labels + one bit per unit of districts 1 and 2
  std::vector<DistrictIndex> plan = before;
  ASSERT_TRUE(decode_record(RecordKind::pair, out, 1, 100, plan));
  EXPECT_EQ(plan, after);
  out.clear();
  EXPECT_EQ(encoder.encode(after, false, out), RecordKind::unchanged);
  EXPECT_TRUE(out.empty());
}

TEST(PlanCodec, RejectsGarbage) {
  std::vector<DistrictIndex> plan(10, 0);
  const std::vector<std::uint8_t> bad_runs = {0x05, 0x11, 0x01};  // 8 units from unit 5 of 10
  EXPECT_FALSE(decode_record(RecordKind::runs, bad_runs, 1, 4, plan));
  const std::vector<std::uint8_t> bad_label = {0x00, 0x03, 0x09};  // label 9 of 4 districts
  EXPECT_FALSE(decode_record(RecordKind::runs, bad_label, 1, 4, plan));
  EXPECT_FALSE(decode_record(RecordKind::full, bad_runs, 1, 4, plan));
  const std::vector<std::uint8_t> no_guess = {0x00, 0x02};  // "as the last run" with none before
  EXPECT_FALSE(decode_record(RecordKind::runs, no_guess, 1, 4, plan));
  const std::vector<std::uint8_t> good = {0x02, 0x05, 0x03};  // units 2..3 get district 3
  ASSERT_TRUE(decode_record(RecordKind::runs, good, 1, 4, plan));
  EXPECT_EQ(plan, (std::vector<DistrictIndex>{0, 0, 3, 3, 0, 0, 0, 0, 0, 0}));
}

// Flips bytes in the middle of chunk `chunk` of dataset `name` of chain 1, found with
// H5Dget_chunk_info, then checks that verify() names chain 1 only and chain 0 stays readable.
void corrupt_chunk(const fs::path& path, const char* name, hsize_t chunk) {
  haddr_t address = 0;
  hsize_t size = 0;
  {
    silence_hdf5_errors();
    H5File file(H5Fopen(path.c_str(), H5F_ACC_RDONLY, H5P_DEFAULT));
    ASSERT_TRUE(file.valid());
    H5Dataset d(H5Dopen2(file.get(), (std::string("chain_1/") + name).c_str(), H5P_DEFAULT));
    ASSERT_TRUE(d.valid());
    H5Dataspace space(H5Dget_space(d.get()));
    unsigned mask = 0;
    hsize_t coords[2];
    ASSERT_GE(H5Dget_chunk_info(d.get(), space.get(), chunk, coords, &mask, &address, &size), 0);
  }
  std::fstream f(path, std::ios::in | std::ios::out | std::ios::binary);
  for (hsize_t i = 0; i < 4; ++i) {
    f.seekg(static_cast<std::streamoff>(address + size / 2 + i));
    char c = 0;
    f.get(c);
    f.seekp(static_cast<std::streamoff>(address + size / 2 + i));
    f.put(static_cast<char>(c ^ 0x5A));
  }
}

std::vector<Plans> two_chains() {
  return {random_sequence(3000, 30, 200, 11), random_sequence(3000, 30, 200, 12)};
}

TEST(EnsembleVerify, FlippedPlanBytesNameTheChain) {
  const fs::path path = temp_file("flip_bytes");
  const auto chains = two_chains();
  write_file(path, 3000, 30, chains, {64, 4096, 4});
  corrupt_chunk(path, "plan_bytes", 2);
  EnsembleReader reader(path.string());
  const auto problems = reader.verify();
  ASSERT_FALSE(problems.empty());
  for (const auto& p : problems) {
    EXPECT_EQ(p.chain_index, 1u) << p.what;
    EXPECT_LE(p.first_record, p.last_record);
    EXPECT_LT(p.last_record, 200u);
  }
  for (std::size_t r = 0; r < 200; r += 13) EXPECT_EQ(reader.read_plan(0, r), chains[0][r]);
  // Records well before the damaged chunk still read back.
  EXPECT_EQ(reader.read_plan(1, 0), chains[1][0]);
  fs::remove(path);
}

TEST(EnsembleVerify, FlippedObservablesNameTheChain) {
  const fs::path path = temp_file("flip_obs");
  write_file(path, 3000, 30, two_chains());
  corrupt_chunk(path, "observables", 0);
  EnsembleReader reader(path.string());
  const auto problems = reader.verify();
  ASSERT_EQ(problems.size(), 1u);
  EXPECT_EQ(problems[0].chain_index, 1u);
  EXPECT_EQ(problems[0].first_record, 0u);
  EXPECT_EQ(problems[0].last_record, 199u);  // the single observables chunk holds all 200 rows
  EXPECT_THROW((void)reader.read_observables(1), StoreError);
  EXPECT_EQ(reader.read_observables(0).size(), 400u);
  fs::remove(path);
}

TEST(EnsembleVerify, FlippedSortedVectorNamesTheChainAndTheRecords) {
  const fs::path path = temp_file("flip_sorted");
  constexpr std::size_t kRecords = 600, kWidth = 3;
  {
    EnsembleWriter writer(path.string(), {20, 3, "", {}});
    std::vector<DistrictIndex> plan(20, 1);
    std::vector<double> sorted(kWidth);
    for (std::uint64_t chain = 0; chain < 2; ++chain) {
      const std::size_t h = writer.add_chain(chain, {"x"}, {"g.sorted_shares"}, kWidth);
      for (std::size_t r = 0; r < kRecords; ++r) {
        for (std::size_t i = 0; i < kWidth; ++i) sorted[i] = 1.0 / static_cast<double>(r + i + 1);
        const double x = static_cast<double>(r);
        writer.record(h, r, plan, std::span<const double>(&x, 1), PlanChanges{}, sorted);
      }
    }
    writer.close();
  }
  corrupt_chunk(path, "sorted/g.sorted_shares", 1);
  EnsembleReader reader(path.string());
  const auto problems = reader.verify();
  ASSERT_EQ(problems.size(), 1u);
  EXPECT_EQ(problems[0].chain_index, 1u);
  EXPECT_EQ(problems[0].first_record, 256u);  // the second chunk of 256 rows
  EXPECT_EQ(problems[0].last_record, 511u);
  EXPECT_NE(problems[0].what.find("sorted/g.sorted_shares rows unreadable"), std::string::npos)
      << problems[0].what;
  EXPECT_EQ(reader.read_sorted(0, "g.sorted_shares").size(), kRecords * kWidth);
  fs::remove(path);
}

TEST(EnsembleVerify, ShortenedByteStreamIsReportedAsTruncated) {
  const fs::path path = temp_file("short_stream");
  write_file(path, 3000, 30, two_chains());
  {
    H5File file(H5Fopen(path.c_str(), H5F_ACC_RDWR, H5P_DEFAULT));
    H5Dataset d(H5Dopen2(file.get(), "chain_1/plan_bytes", H5P_DEFAULT));
    ASSERT_TRUE(d.valid());
    const hsize_t dims[1] = {10000};  // after the first full plan (3000 bytes), before the end
    ASSERT_GE(H5Dset_extent(d.get(), dims), 0);
  }
  EnsembleReader reader(path.string());
  const auto problems = reader.verify();
  ASSERT_EQ(problems.size(), 1u);
  EXPECT_EQ(problems[0].chain_index, 1u);
  EXPECT_GT(problems[0].first_record, 0u);
  EXPECT_EQ(problems[0].last_record, 199u);
  EXPECT_NE(problems[0].what.find("truncated"), std::string::npos);
  EXPECT_THROW((void)reader.read_plan(1, 199), StoreError);
  EXPECT_EQ(reader.read_plan(1, 0), two_chains()[1][0]);
  fs::remove(path);
}

TEST(EnsembleVerify, TruncatedFileThrowsStoreErrorWithPath) {
  const fs::path path = temp_file("truncated_file");
  write_file(path, 3000, 30, two_chains());
  fs::resize_file(path, fs::file_size(path) / 2);
  try {
    EnsembleReader reader(path.string());
    (void)reader.verify();
    FAIL() << "a half file opened";
  } catch (const StoreError& e) {
    EXPECT_EQ(e.path(), path.string());
  }
  fs::remove(path);
}

}  // namespace
}  // namespace planmill

namespace planmill {
namespace {

TEST(EnsembleVerify, FlippedRecordIndexNamesTheChain) {
  const fs::path path = temp_file("flip_index");
  const auto chains = two_chains();
  write_file(path, 3000, 30, chains);
  corrupt_chunk(path, "plan_records", 0);
  EnsembleReader reader(path.string());
  const auto problems = reader.verify();
  ASSERT_EQ(problems.size(), 1u);
  EXPECT_EQ(problems[0].chain_index, 1u);
  EXPECT_NE(problems[0].what.find("plan_records"), std::string::npos) << problems[0].what;
  EXPECT_THROW((void)reader.read_plan(1, 0), StoreError);
  EXPECT_EQ(reader.read_plan(0, 199), chains[0][199]);
  fs::remove(path);
}

}  // namespace
}  // namespace planmill
