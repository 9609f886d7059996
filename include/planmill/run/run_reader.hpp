#pragma once
// Reads a run folder as the committed state lists it: per chain, its records across plan files
// in order, as if they were one sequence. Files or records not in run-state.json are ignored.
// With tempering and record = "all" a chain also has a sequence per hotter rung (rung 1..R-1),
// recorded at the same steps; rung 0, the default, is the chain's ensemble.
#include <functional>
#include <map>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "planmill/run/run_state.hpp"

namespace planmill {

class RunReader {
 public:
  // Throws InputError when the folder has no readable run-state.json. A listed plan file that
  // cannot be opened is reported by verify(), and reading its chains' records there throws
  // StoreError; every other chain stays readable.
  explicit RunReader(const std::string& run_dir);
  ~RunReader();
  RunReader(const RunReader&) = delete;
  RunReader& operator=(const RunReader&) = delete;

  [[nodiscard]] const RunState& state() const noexcept { return state_; }
  [[nodiscard]] const RunLayout& layout() const noexcept { return layout_; }
  [[nodiscard]] std::vector<std::uint64_t> chains() const;
  [[nodiscard]] std::size_t unit_count() const noexcept { return unit_count_; }
  [[nodiscard]] std::size_t district_count() const noexcept { return district_count_; }
  // 1 unless every rung of the chain's ladder was recorded.
  [[nodiscard]] std::uint64_t recorded_rungs(std::uint64_t chain) const;
  [[nodiscard]] std::uint64_t record_count(std::uint64_t chain) const;
  [[nodiscard]] std::vector<std::uint64_t> record_steps(std::uint64_t chain,
                                                        std::uint64_t rung = 0) const;
  [[nodiscard]] std::vector<DistrictIndex> read_plan(std::uint64_t chain, std::uint64_t record,
                                                     std::uint64_t rung = 0) const;
  [[nodiscard]] const std::vector<std::string>& observable_names() const noexcept {
    return state_.observable_names;
  }
  // Calls visit(record, plan) for the chain's records first..last in order, decoding each record
  // once: the way to read many plans (read_plan starts again from a self-contained record every
  // time). Throws as read_plan does.
  void for_each_plan(
      std::uint64_t chain, std::uint64_t first, std::uint64_t last,
      const std::function<void(std::uint64_t, std::span<const DistrictIndex>)>& visit,
      std::uint64_t rung = 0) const;
  // Row-major records x observables, over all of the chain's records.
  [[nodiscard]] std::vector<double> read_observables(std::uint64_t chain,
                                                     std::uint64_t rung = 0) const;
  // The measures' sorted vectors (state().sorted_names): row-major records x district_count() of
  // one of them, over all of the chain's records. std::out_of_range for a name not in the run.
  [[nodiscard]] const std::vector<std::string>& sorted_names() const noexcept {
    return state_.sorted_names;
  }
  [[nodiscard]] std::vector<double> read_sorted(std::uint64_t chain, const std::string& name,
                                                std::uint64_t rung = 0) const;
  // Checksums and consistency of every listed file, with record ranges counted per chain across
  // files; empty = all good. verify() covers the chains (the ensemble); verify_rungs() the hotter
  // rungs' records, with ChainProblem::chain_index the chain and `what` naming the rung.
  // A listed file whose SHA-256 differs from the one the run state recorded when it was committed
  // is not the run's file (another plan file put in its place): every span in it is reported as
  // such, and its own checks are not consulted.
  [[nodiscard]] std::vector<ChainProblem> verify() const;
  [[nodiscard]] std::vector<ChainProblem> verify_rungs() const;
  // A listed file against the SHA-256 the run state recorded for it: "matches", "differs",
  // "missing", or "not recorded" (a run state from before planmill recorded it). Hashes each
  // file once.
  [[nodiscard]] std::string identity_of(const std::string& file) const;

 private:
  struct Span {
    const EnsembleReader* reader;  // null when the file could not be opened
    std::string file;
    std::uint64_t first;  // chain record index of the span's first record
    std::uint64_t records;
  };
  [[nodiscard]] const std::vector<Span>& spans_of(std::uint64_t chain) const;
  [[nodiscard]] const ChainEntry& entry_of(std::uint64_t chain) const;  // out_of_range if none
  [[nodiscard]] const EnsembleReader& reader_of(const Span& span) const;  // StoreError if unreadable
  [[nodiscard]] std::uint64_t store_index(std::uint64_t chain, std::uint64_t rung) const;
  [[nodiscard]] std::vector<ChainProblem> verify_records(bool rungs) const;

  RunLayout layout_;
  RunState state_;
  std::size_t unit_count_ = 0, district_count_ = 0;
  std::map<std::string, std::unique_ptr<EnsembleReader>> files_;
  std::map<std::uint64_t, std::vector<Span>> spans_;
  std::map<std::string, std::string> unreadable_;  // file -> why it could not be opened
  // Each opened file's own check, done once for verify() and verify_rungs() together.
  mutable std::optional<std::map<std::string, std::vector<ChainProblem>>> file_checks_;
  mutable std::optional<std::map<std::string, std::string>> identities_;  // file -> identity_of
};

}  // namespace planmill
