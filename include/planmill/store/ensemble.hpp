#pragma once
// Ensemble files: one HDF5 file (one per rank and segment) holding, per chain, the recorded
// plans in compact form, a table of observables per recorded plan and the step-outcome counters.
// Layout in docs/format.md. Every HDF5 failure throws StoreError (store/hdf5_handle.hpp).
#include <cstdint>
#include <functional>
#include <memory>
#include <span>
#include <string>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/plan/plan_changes.hpp"
#include "planmill/store/plan_codec.hpp"

namespace planmill {

// 2: optional /unit_adjacency and graph records (kind 4). Version 1 files are still read.
inline constexpr std::int64_t kEnsembleFormatVersion = 2;

struct EnsembleHeader {
  std::size_t unit_count = 0;
  std::size_t district_count = 0;
  std::string job_text;  // the job file as the user wrote it
  // Unit adjacency (e.g. unit_adjacency(graph)); when given, plans are range-coded against it
  // (graph records), about half the size of the other kinds for plans far apart.
  UnitAdjacency adjacency;
};

struct EnsembleWriterOptions {
  std::size_t full_every = 256;       // a self-contained record every this many records of a chain
  std::size_t chunk_bytes = 1 << 16;  // chunk size of the byte stream; buffered until a chunk fills
  int deflate_level = 4;
};

// Step-outcome counters of a chain, as stored (attributes of the chain group).
struct StoredCounters {
  std::uint64_t steps = 0, accepted = 0, rejected = 0, no_cut = 0, invalid = 0;
};

// Builds one ensemble file in memory and writes it in one piece on close(): a killed process or
// a full disk never leaves a half-written file, and every write error surfaces in close().
class EnsembleWriter {
 public:
  // The file appears at `path` only when close() succeeds (replacing any file there). Throws
  // OutputError at once when the folder of `path` is missing or not writable.
  EnsembleWriter(const std::string& path, const EnsembleHeader& header,
                 EnsembleWriterOptions options = {});
  // Without close(), nothing is written.
  ~EnsembleWriter();
  EnsembleWriter(const EnsembleWriter&) = delete;
  EnsembleWriter& operator=(const EnsembleWriter&) = delete;

  // Creates group chain_<index> with one observable column per name. Returns a handle for record().
  std::size_t add_chain(std::uint64_t chain_index,
                        const std::vector<std::string>& observable_names);
  // The same, with per-record vectors of `width` values each (the measures' sorted shares), one
  // dataset chain_<index>/sorted/<name> each.
  std::size_t add_chain(std::uint64_t chain_index, const std::vector<std::string>& observable_names,
                        const std::vector<std::string>& sorted_names, std::size_t width);
  // Appends one recorded plan (labels 0..k-1 per unit) with its observables (one per name).
  // Exact whatever the plan; throws std::invalid_argument on a wrong size or label.
  void record(std::size_t chain, std::uint64_t step, std::span<const DistrictIndex> plan,
              std::span<const double> observables);
  // The same record, faster: `changes` lists the units moved since this chain's previous record
  // (Plan::changes(), cleared after each record), so only those are compared; an overflowed list
  // means compare every unit. A list missing a changed unit gives a wrong record (debug builds
  // assert); only the listed units are checked for a bad label.
  void record(std::size_t chain, std::uint64_t step, std::span<const DistrictIndex> plan,
              std::span<const double> observables, const PlanChanges& changes);
  // The same, with the chain's sorted vectors one after another (sorted_names.size() * width).
  void record(std::size_t chain, std::uint64_t step, std::span<const DistrictIndex> plan,
              std::span<const double> observables, const PlanChanges& changes,
              std::span<const double> sorted);
  void set_counters(std::size_t chain, const StoredCounters& counters);
  // Finishes the file and writes it to `path` (a temporary name, fsync, rename). Throws
  // StoreError when HDF5 fails, OutputError naming the file when it cannot be written; either way
  // no file (or the one there before) is at `path`. The writer takes no records after close().
  void close();
  // Bytes of encoded plan records so far (before HDF5 compression), summed over chains.
  [[nodiscard]] std::uint64_t encoded_bytes() const noexcept;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

struct ChainProblem {
  std::uint64_t chain_index = 0;
  std::uint64_t first_record = 0;  // records [first_record, last_record] are affected
  std::uint64_t last_record = 0;   // UINT64_MAX: up to the end, count unknown (index unreadable)
  std::string what;
  std::uint64_t rung = 0;  // in a run: the ladder rung whose records these are (RunReader)
};

class EnsembleReader {
 public:
  explicit EnsembleReader(const std::string& path);
  ~EnsembleReader();
  EnsembleReader(const EnsembleReader&) = delete;
  EnsembleReader& operator=(const EnsembleReader&) = delete;

  [[nodiscard]] const EnsembleHeader& header() const noexcept;
  [[nodiscard]] std::int64_t format_version() const noexcept;
  // Chain indices in the file, ascending.
  [[nodiscard]] std::vector<std::uint64_t> chains() const;
  [[nodiscard]] std::size_t record_count(std::uint64_t chain_index) const;
  [[nodiscard]] std::vector<std::uint64_t> record_steps(std::uint64_t chain_index) const;
  // Plan of record r: decoded from the nearest preceding full plan.
  [[nodiscard]] std::vector<DistrictIndex> read_plan(std::uint64_t chain_index,
                                                     std::size_t record) const;
  // Calls visit(record, plan) for records first..last in order, decoding each record once: the
  // way to read many plans (read_plan starts again from a self-contained record every time).
  void for_each_plan(
      std::uint64_t chain_index, std::size_t first, std::size_t last,
      const std::function<void(std::size_t, std::span<const DistrictIndex>)>& visit) const;
  [[nodiscard]] std::vector<std::string> observable_names(std::uint64_t chain_index) const;
  // Row-major records x observables.
  [[nodiscard]] std::vector<double> read_observables(std::uint64_t chain_index) const;
  // Names of the chain's sorted vectors (empty in files without them), in the order written.
  [[nodiscard]] std::vector<std::string> sorted_names(std::uint64_t chain_index) const;
  // Row-major records x width of one sorted vector; std::out_of_range for a name not in the file.
  [[nodiscard]] std::vector<double> read_sorted(std::uint64_t chain_index, const std::string& name) const;
  [[nodiscard]] StoredCounters counters(std::uint64_t chain_index) const;
  // Checks every chain (checksums, index consistency, decodability); empty = all good.
  [[nodiscard]] std::vector<ChainProblem> verify() const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace planmill
