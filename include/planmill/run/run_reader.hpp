#pragma once
// Reads a run folder as the committed state lists it: per chain, its records across plan files
// in order, as if they were one sequence. Files or records not in run-state.json are ignored.
#include <map>
#include <memory>
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
  [[nodiscard]] std::uint64_t record_count(std::uint64_t chain) const;
  [[nodiscard]] std::vector<std::uint64_t> record_steps(std::uint64_t chain) const;
  [[nodiscard]] std::vector<DistrictIndex> read_plan(std::uint64_t chain, std::uint64_t record) const;
  [[nodiscard]] const std::vector<std::string>& observable_names() const noexcept {
    return state_.observable_names;
  }
  // Row-major records x observables, over all of the chain's records.
  [[nodiscard]] std::vector<double> read_observables(std::uint64_t chain) const;
  // Checksums and consistency of every listed file, with record ranges counted per chain across
  // files; empty = all good.
  [[nodiscard]] std::vector<ChainProblem> verify() const;

 private:
  struct Span {
    const EnsembleReader* reader;  // null when the file could not be opened
    std::string file;
    std::uint64_t first;  // chain record index of the span's first record
    std::uint64_t records;
  };
  [[nodiscard]] const std::vector<Span>& spans_of(std::uint64_t chain) const;
  [[nodiscard]] const EnsembleReader& reader_of(const Span& span) const;  // StoreError if unreadable

  RunLayout layout_;
  RunState state_;
  std::size_t unit_count_ = 0, district_count_ = 0;
  std::map<std::string, std::unique_ptr<EnsembleReader>> files_;
  std::map<std::uint64_t, std::vector<Span>> spans_;
  std::map<std::string, std::string> unreadable_;  // file -> why it could not be opened
};

}  // namespace planmill
