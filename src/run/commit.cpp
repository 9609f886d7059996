// The checkpoint: every rank closes its plan file, and rank 0 commits every rank's chains
// (snapshots, counters, record spans, files) in one atomic write of the run state.
#include "run/chain_runner.hpp"

#include <algorithm>
#include <map>

#include "planmill/io/file_hash.hpp"
#include "planmill/temper/ladder_summary.hpp"

namespace planmill::runner {
namespace {

StoredCounters stored(const ChainCounters& c) {
  return {c.steps, c.outcomes[static_cast<std::size_t>(StepResult::accepted)],
          c.outcomes[static_cast<std::size_t>(StepResult::rejected)],
          c.outcomes[static_cast<std::size_t>(StepResult::no_cut)],
          c.outcomes[static_cast<std::size_t>(StepResult::invalid)]};
}

}  // namespace

// Closes this rank's plan file, then rank 0 commits every rank's chains in one atomic write.
// A final commit (how_ended not empty) also closes the session.
void ChainRunner::commit(const std::string& how_ended) {
  // First, as nothing can fail yet: the holders of a shared ladder add up their kernel counters.
  std::vector<StoredCounters> counters;
  for (auto& local : chains_) {
    counters.push_back(stored(local.counters()));
    if (local.holders != MPI_COMM_NULL) counters.back() = add_over(counters.back(), local.holders);
  }
  RunState part;
  everywhere_then_agree([&] {
    if (writer_) {
      for (std::size_t k = 0; k < chains_.size(); ++k) {
        for (const std::size_t handle : chains_[k].handles) {
          if (handle != SIZE_MAX) writer_->set_counters(handle, counters[k]);
        }
      }
      writer_->close();  // writes the file in one piece, fsynced
      writer_.reset();
      part.files.push_back({writer_file_, segment_, w_.rank, host_,
                            sha256_file_hex(layout_.resolve(writer_file_).string())});
    }
    const std::string now = utc_now_iso8601();
    for (std::size_t k = 0; k < chains_.size(); ++k) {
      LocalChain& local = chains_[k];
      ChainEntry& e = local.entry;
      e.steps = local.steps();
      e.counters = counters[k];
      e.snapshot = local.save();
      if (local.ladder) e.ladder = ladder_summary(*local.ladder).dump();
      e.last_checkpoint = now;
      if (local.segment_records > 0) {
        e.spans.push_back({writer_file_, local.segment_records});
        e.records += local.segment_records;
      }
      local.segment_records = 0;
      std::fill(local.handles.begin(), local.handles.end(), SIZE_MAX);
      part.chains.push_back(e);
    }
  });
  const auto parts = gather_strings(encode_run_state(part), w_);
  std::string encoded;
  on_root_then_agree(w_, [&] {
    fsync_path(layout_.plans_dir());
    // A shared ladder comes from each of its holders: the home rank's entry holds its records,
    // and the holders' snapshots combine into one.
    std::map<std::uint64_t, std::vector<std::string>> snapshots;
    for (std::size_t rank = 0; rank < parts.size(); ++rank) {
      const RunState from_rank = decode_run_state(parts[rank]);
      for (const auto& f : from_rank.files) state_.files.push_back(f);
      for (const auto& c : from_rank.chains) {
        snapshots[c.index].push_back(c.snapshot);
        if (home_rank(c.index) != static_cast<int>(rank)) continue;
        auto it = std::find_if(state_.chains.begin(), state_.chains.end(),
                               [&](const ChainEntry& e) { return e.index == c.index; });
        *it = c;
      }
    }
    for (auto& e : state_.chains) {
      const auto& list = snapshots[e.index];
      if (list.size() > 1) e.snapshot = Ladder::combine_snapshots(list);
    }
    state_.checkpoints = segment_ + 1;
    state_.finished = how_ended == "finished";
    state_.stop_reason = how_ended;
    if (!how_ended.empty()) {
      state_.sessions.back().ended = utc_now_iso8601();
      state_.sessions.back().how_ended = how_ended;
    }
    write_run_state(layout_, state_);
    encoded = encode_run_state(state_);
  });
  state_ = decode_run_state(broadcast_string(encoded));
  ++segment_;
}

}  // namespace planmill::runner
