#include "planmill/run/run_reader.hpp"

#include <algorithm>
#include <filesystem>
#include <stdexcept>

#include "planmill/base/error.hpp"
#include "planmill/io/file_hash.hpp"
#include "planmill/store/hdf5_handle.hpp"

namespace planmill {

RunReader::RunReader(const std::string& run_dir)
    : layout_{run_dir}, state_(read_run_state(layout_)) {
  for (const auto& f : state_.files) {
    std::unique_ptr<EnsembleReader> reader;
    if (!std::filesystem::exists(layout_.resolve(f.file))) {
      unreadable_.emplace(f.file, "missing");  // said so, not as HDF5's error stack
      files_.emplace(f.file, nullptr);
      continue;
    }
    try {
      reader = std::make_unique<EnsembleReader>(layout_.resolve(f.file).string());
    } catch (const StoreError& e) {
      unreadable_.emplace(f.file, e.what());  // reported by verify(); other files stay readable
      files_.emplace(f.file, nullptr);
      continue;
    }
    if (unit_count_ == 0) {
      unit_count_ = reader->header().unit_count;
      district_count_ = reader->header().district_count;
    } else if (reader->header().unit_count != unit_count_ ||
               reader->header().district_count != district_count_) {
      throw InputError({layout_.resolve(f.file).string(), 0, ""},
                       "has a different map or district count from the run's other plan files",
                       "keep only the files that run-state.json lists");
    }
    files_.emplace(f.file, std::move(reader));
  }
  for (const auto& c : state_.chains) {
    auto& spans = spans_[c.index];
    std::uint64_t first = 0;
    for (const auto& sp : c.spans) {
      const auto it = files_.find(sp.file);
      if (it == files_.end()) {
        throw InputError({layout_.state_file().string(), 0, "chains"},
                         "chain " + std::to_string(c.index) + " names plan file " + sp.file +
                             " that the state does not list",
                         "the run state is inconsistent; restore it from a backup");
      }
      spans.push_back({it->second.get(), sp.file, first, sp.records});
      first += sp.records;
    }
  }
}

RunReader::~RunReader() = default;

std::vector<std::uint64_t> RunReader::chains() const {
  std::vector<std::uint64_t> out;
  for (const auto& c : state_.chains) out.push_back(c.index);
  return out;
}

const std::vector<RunReader::Span>& RunReader::spans_of(std::uint64_t chain) const {
  const auto it = spans_.find(chain);
  if (it == spans_.end()) {
    throw std::out_of_range("the run has no chain " + std::to_string(chain));
  }
  return it->second;
}

const EnsembleReader& RunReader::reader_of(const Span& span) const {
  if (span.reader == nullptr) {
    throw StoreError(layout_.resolve(span.file).string(), "open", unreadable_.at(span.file));
  }
  return *span.reader;
}

const ChainEntry& RunReader::entry_of(std::uint64_t chain) const {
  for (const auto& c : state_.chains) {
    if (c.index == chain) return c;
  }
  throw std::out_of_range("the run has no chain " + std::to_string(chain));
}

std::uint64_t RunReader::recorded_rungs(std::uint64_t chain) const {
  return entry_of(chain).recorded_rungs;
}

std::uint64_t RunReader::store_index(std::uint64_t chain, std::uint64_t rung) const {
  const std::uint64_t rungs = recorded_rungs(chain);
  if (rung >= rungs) {
    throw std::out_of_range("chain " + std::to_string(chain) + " has no recorded rung " +
                            std::to_string(rung) + " (" + std::to_string(rungs) + " recorded)");
  }
  return rung_record_index(entry_of(chain).index_in_files(), rung);
}

std::uint64_t RunReader::record_count(std::uint64_t chain) const {
  std::uint64_t n = 0;
  for (const auto& s : spans_of(chain)) n += s.records;
  return n;
}

std::vector<std::uint64_t> RunReader::record_steps(std::uint64_t chain, std::uint64_t rung) const {
  const std::uint64_t index = store_index(chain, rung);
  std::vector<std::uint64_t> out;
  for (const auto& s : spans_of(chain)) {
    const auto steps = reader_of(s).record_steps(index);
    out.insert(out.end(), steps.begin(),
               steps.begin() +
                   static_cast<std::ptrdiff_t>(std::min<std::uint64_t>(s.records, steps.size())));
  }
  return out;
}

std::vector<DistrictIndex> RunReader::read_plan(std::uint64_t chain, std::uint64_t record,
                                                std::uint64_t rung) const {
  const std::uint64_t index = store_index(chain, rung);
  for (const auto& s : spans_of(chain)) {
    if (record < s.first + s.records) return reader_of(s).read_plan(index, record - s.first);
  }
  throw std::out_of_range("chain " + std::to_string(chain) + " has " +
                          std::to_string(record_count(chain)) + " records, not " +
                          std::to_string(record + 1));
}

void RunReader::for_each_plan(
    std::uint64_t chain, std::uint64_t first, std::uint64_t last,
    const std::function<void(std::uint64_t, std::span<const DistrictIndex>)>& visit,
    std::uint64_t rung) const {
  const std::uint64_t index = store_index(chain, rung);
  if (first > last || last >= record_count(chain)) {
    throw std::out_of_range("chain " + std::to_string(chain) + " has " +
                            std::to_string(record_count(chain)) + " records, not " +
                            std::to_string(first) + ".." + std::to_string(last));
  }
  for (const auto& s : spans_of(chain)) {
    if (s.records == 0 || s.first + s.records <= first || s.first > last) continue;
    const std::uint64_t lo = std::max(first, s.first), hi = std::min(last, s.first + s.records - 1);
    reader_of(s).for_each_plan(index, lo - s.first, hi - s.first,
                               [&](std::size_t r, std::span<const DistrictIndex> plan) {
                                 visit(s.first + r, plan);
                               });
  }
}

std::vector<double> RunReader::read_observables(std::uint64_t chain, std::uint64_t rung) const {
  const std::uint64_t index = store_index(chain, rung);
  const std::size_t width = state_.observable_names.size();
  std::vector<double> out;
  for (const auto& s : spans_of(chain)) {
    const auto rows = reader_of(s).read_observables(index);
    const std::size_t take = std::min<std::size_t>(rows.size(), s.records * width);
    out.insert(out.end(), rows.begin(), rows.begin() + static_cast<std::ptrdiff_t>(take));
  }
  return out;
}

std::vector<double> RunReader::read_sorted(std::uint64_t chain, const std::string& name,
                                           std::uint64_t rung) const {
  if (std::find(state_.sorted_names.begin(), state_.sorted_names.end(), name) == state_.sorted_names.end())
    throw std::out_of_range("the run has no sorted vector " + name);
  const std::uint64_t index = store_index(chain, rung);
  std::vector<double> out;
  for (const auto& s : spans_of(chain)) {
    if (s.records == 0) continue;
    const auto rows = reader_of(s).read_sorted(index, name);
    const std::size_t take = std::min<std::size_t>(rows.size(), s.records * district_count_);
    out.insert(out.end(), rows.begin(), rows.begin() + static_cast<std::ptrdiff_t>(take));
  }
  return out;
}

std::string RunReader::identity_of(const std::string& file) const {
  if (!identities_) {
    identities_.emplace();
    for (const auto& f : state_.files) {
      std::string status = "not recorded";
      if (!f.sha256.empty()) {
        try {
          status = sha256_file_hex(layout_.resolve(f.file).string()) == f.sha256 ? "matches"
                                                                                  : "differs";
        } catch (const InputError&) {
          status = "missing";
        }
      }
      (*identities_)[f.file] = status;
    }
  }
  const auto it = identities_->find(file);
  return it == identities_->end() ? "not recorded" : it->second;
}

std::vector<ChainProblem> RunReader::verify() const { return verify_records(false); }
std::vector<ChainProblem> RunReader::verify_rungs() const { return verify_records(true); }

std::vector<ChainProblem> RunReader::verify_records(bool rungs) const {
  const auto rung_text = [&](std::uint64_t rung) {
    return rungs ? "rung " + std::to_string(rung) + ": " : std::string();
  };
  std::vector<ChainProblem> problems;
  const bool any_rungs = std::any_of(state_.chains.begin(), state_.chains.end(),
                                     [](const ChainEntry& c) { return c.recorded_rungs > 1; });
  if (rungs && !any_rungs) return problems;  // nothing to check: spare reading every file again
  for (const auto& c : state_.chains) {
    for (std::uint64_t rung = rungs ? 1 : 0; rung < (rungs ? c.recorded_rungs : 1); ++rung) {
      for (const auto& s : spans_of(c.index)) {
        if (s.reader == nullptr) {
          const std::string& why = unreadable_.at(s.file);
          problems.push_back({c.index, s.first, s.first + s.records - 1,
                              s.file + ": " + rung_text(rung) +
                                  (why == "missing" ? why : "cannot be opened: " + why),
                              rung});
          continue;
        }
        if (identity_of(s.file) == "differs") {
          if (s.records == 0) continue;
          problems.push_back({c.index, s.first, s.first + s.records - 1,
                              s.file + ": " + rung_text(rung) +
                                  "is not the file the run committed (its SHA-256 differs from "
                                  "the one " + layout_.state_file().filename().string() +
                                  " records)",
                              rung});
          continue;
        }
        // A group the file lacks holds no records; an unreadable index is left to verify() below.
        const std::uint64_t index = rung_record_index(c.index_in_files(), rung);
        const auto held = s.reader->chains();
        std::uint64_t in_file = 0;
        if (std::binary_search(held.begin(), held.end(), index)) {
          try {
            in_file = s.reader->record_count(index);
          } catch (const StoreError&) {
            continue;
          }
        }
        if (in_file < s.records) {
          problems.push_back({c.index, s.first + in_file, s.first + s.records - 1,
                              s.file + ": " + rung_text(rung) +
                                  "the plan file holds fewer records than the run state lists",
                              rung});
        }
      }
    }
  }
  if (!file_checks_) {
    file_checks_.emplace();
    for (const auto& [name, reader] : files_) {
      if (reader != nullptr && identity_of(name) != "differs") (*file_checks_)[name] = reader->verify();
    }
  }
  for (const auto& [name, checks] : *file_checks_) {
    const EnsembleReader* reader = files_.at(name).get();
    for (auto p : checks) {
      if (is_rung_record_index(p.chain_index) != rungs) continue;
      const std::uint64_t offset = rungs ? p.chain_index - kRungRecordBase : 0;
      const std::uint64_t in_files = rungs ? offset / kMaxRungs : p.chain_index;
      // Records the state does not list (a chain or rung it does not know) are not the run's. In
      // a pool the chain is the one whose spans name this file and that it stores as in_files.
      const auto state_chain = std::find_if(
          state_.chains.begin(), state_.chains.end(), [&](const ChainEntry& c) {
            return c.index_in_files() == in_files &&
                   std::any_of(c.spans.begin(), c.spans.end(),
                               [&](const ChainFileSpan& sp) { return sp.file == name; });
          });
      if (state_chain == state_.chains.end()) continue;
      const std::uint64_t chain = state_chain->index;
      if (rungs && offset % kMaxRungs >= state_chain->recorded_rungs) continue;
      bool listed = false;
      for (const auto& s : spans_of(chain)) {
        if (s.reader != reader) continue;
        listed = true;
        p.first_record += s.first;
        p.last_record =
            p.last_record == UINT64_MAX ? s.first + s.records - 1 : p.last_record + s.first;
      }
      if (!listed) continue;  // the chain's spans do not name this file
      p.what = name + ": " + rung_text(offset % kMaxRungs) + p.what;
      p.chain_index = chain;
      p.rung = offset % kMaxRungs;
      problems.push_back(std::move(p));
    }
  }
  return problems;
}

}  // namespace planmill
