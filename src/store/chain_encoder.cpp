// ChainEncoder: the writer's side of the plan codec (see plan_codec.hpp): finds what changed
// since the previous plan and picks the smallest record kind. The record layouts themselves live
// in delta_record.*, graph_record.* and codec_bytes.hpp.
#include <algorithm>
#include <bit>
#include <cassert>
#include <cstring>
#include <functional>
#include <numeric>
#include <stdexcept>
#include <string>

#include "planmill/store/plan_codec.hpp"
#include "store/delta_record.hpp"
#include "store/graph_model.hpp"
#include "store/graph_record.hpp"
#include "store/range_coder.hpp"

namespace planmill {
namespace {

[[noreturn]] void throw_bad_label(DistrictIndex d, std::size_t k) {
  throw std::invalid_argument("plan has label " + std::to_string(d) + " but only " +
                              std::to_string(k) + " districts");
}

}  // namespace

using codec::lower_part;

ChainEncoder::ChainEncoder(std::size_t unit_count, std::size_t district_count,
                           const UnitAdjacency* adjacency)
    : n_(unit_count),
      k_(district_count),
      width_(label_width(district_count)),
      graph_records_(adjacency && !adjacency->empty()),
      lower_(graph_records_ ? lower_part(adjacency->view()) : UnitAdjacency{}),
      previous_(unit_count),
      label_size_(district_count),
      guess_(district_count),
      marked_((unit_count + 63) / 64) {
  changed_.reserve(unit_count);
  if (graph_records_) {
    const std::size_t degree = lower_.view().max_degree();
    candidate_.resize(degree);
    candidate_count_.resize(degree);
  }
}

void ChainEncoder::encode_graph(std::span<const DistrictIndex> plan,
                                std::vector<std::uint8_t>& out) {
  codec::RangeEncoder io(out);
  codec::GraphModel model{n_,    k_,        lower_.view(), probabilities_,
                          tree_, position_, candidate_, candidate_count_};
  (void)model.run<true>(io, plan);
  io.finish();
}

void ChainEncoder::take_whole(std::span<const DistrictIndex> plan) {
  for (DistrictIndex d : plan)
    if (d >= k_) throw_bad_label(d, k_);
  std::copy(plan.begin(), plan.end(), previous_.begin());
  std::fill(label_size_.begin(), label_size_.end(), 0);
  for (DistrictIndex d : plan) ++label_size_[d];
  have_previous_ = true;
}

RecordKind ChainEncoder::encode(std::span<const DistrictIndex> plan, bool self_contained,
                                std::vector<std::uint8_t>& out) {
  if (self_contained || !have_previous_) {
    take_whole(plan);
    if (graph_records_) {
      encode_graph(plan, out);
      return RecordKind::graph;
    }
    encode_full(plan, width_, out);
    return RecordKind::full;
  }
  find_changes_by_scan(plan);
  return encode_changes(plan, out);
}

RecordKind ChainEncoder::encode(std::span<const DistrictIndex> plan,
                                std::span<const UnitIndex> maybe_changed, bool self_contained,
                                std::vector<std::uint8_t>& out) {
  if (self_contained || !have_previous_) return encode(plan, true, out);
  find_changes_among(plan, maybe_changed);
  return encode_changes(plan, out);
}

RecordKind ChainEncoder::encode_changes(std::span<const DistrictIndex> next,
                                        std::vector<std::uint8_t>& out) {
  const RecordKind kind = encode_delta(next, out);
  for (std::uint32_t u : changed_) {
    --label_size_[previous_[u]];
    ++label_size_[next[u]];
    previous_[u] = next[u];
  }
  return kind;
}

void ChainEncoder::find_changes_by_scan(std::span<const DistrictIndex> next) {
  const DistrictIndex* const previous = previous_.data();
  changed_.clear();
  const std::size_t n = n_;
  for (std::size_t u = 0; u < n; ++u) {
    // Most of a plan is unchanged: skip equal stretches a block at a time (memcmp is vectorised).
    constexpr std::size_t kBlock = 64;
    while (u + kBlock <= n &&
           std::memcmp(&previous[u], &next[u], kBlock * sizeof(DistrictIndex)) == 0)
      u += kBlock;
    if (u >= n) break;
    if (previous[u] == next[u]) continue;
    if (next[u] >= k_) throw_bad_label(next[u], k_);
    changed_.push_back(static_cast<std::uint32_t>(u));
  }
}

void ChainEncoder::find_changes_among(std::span<const DistrictIndex> next,
                                      std::span<const UnitIndex> maybe_changed) {
  changed_.clear();
  for (const UnitIndex u : maybe_changed) {
    if (u >= n_)
      throw std::invalid_argument("changed unit " + std::to_string(u) + " but only " +
                                  std::to_string(n_) + " units");
    if (next[u] >= k_) throw_bad_label(next[u], k_);
  }
  // A bit per unit sorts and de-duplicates in one pass over the marked words only.
  std::size_t low = marked_.size(), high = 0;
  for (const UnitIndex u : maybe_changed) {
    if (previous_[u] == next[u]) continue;
    const std::size_t word = u / 64;
    marked_[word] |= std::uint64_t{1} << (u % 64);
    low = std::min(low, word);
    high = std::max(high, word + 1);
  }
  for (std::size_t word = low; word < high; ++word) {
    for (std::uint64_t bits = marked_[word]; bits != 0; bits &= bits - 1)
      changed_.push_back(static_cast<std::uint32_t>(word * 64 + std::countr_zero(bits)));
    marked_[word] = 0;
  }
  assert(changed_.size() == static_cast<std::size_t>(std::inner_product(
                                previous_.begin(), previous_.end(), next.begin(), std::size_t{0},
                                std::plus<>(), std::not_equal_to<>())) &&
         "the changed-unit list misses a changed unit");
}

// Writes changed_ (ascending) as a delta record, or as a graph or full record when smaller.
RecordKind ChainEncoder::encode_delta(std::span<const DistrictIndex> next,
                                      std::vector<std::uint8_t>& out) {
  const std::span<const DistrictIndex> previous = previous_;
  std::fill(guess_.begin(), guess_.end(), kNoDistrict);
  const std::size_t start = out.size();
  const std::size_t n = n_;
  // One pass: write the runs encoding and note which labels the changes involve.
  DistrictIndex involved[2] = {kNoDistrict, kNoDistrict};
  bool two_labels = true;
  auto note = [&](DistrictIndex d) {
    if (d == involved[0] || d == involved[1]) return;
    if (involved[0] == kNoDistrict)
      involved[0] = d;
    else if (involved[1] == kNoDistrict)
      involved[1] = d;
    else
      two_labels = false;
  };
  std::size_t last_end = 0;
  const std::size_t changes = changed_.size();
  for (std::size_t i = 0; i < changes;) {
    // A run: consecutive changed units given the same new label.
    const std::size_t u = changed_[i];
    const DistrictIndex label = next[u];
    std::size_t j = i;
    do {
      note(previous[changed_[j]]);
      ++j;
    } while (j < changes && changed_[j] == changed_[j - 1] + 1 && next[changed_[j]] == label);
    note(label);
    const std::size_t end = u + (j - i);
    // Guess the label from the last run that started in the same old district (a merged pair
    // keeps swapping the same two labels); spell it out only when the guess is wrong.
    const bool guessed = guess_[previous[u]] == label;
    guess_[previous[u]] = label;
    codec::put_run(u - last_end, end - u, guessed, label, width_, out);
    last_end = end;
    i = j;
  }
  if (changed_.empty()) return RecordKind::unchanged;
  const std::size_t runs_size = out.size() - start;
  const std::size_t full_size = n * width_;
  constexpr auto kNever = static_cast<std::size_t>(-1);
  std::size_t pair_size = kNever;
  if (two_labels && involved[1] != kNoDistrict)
    pair_size =
        codec::pair_record_size(width_, label_size_[involved[0]] + label_size_[involved[1]]);
  // A graph record costs a full pass over the plan's adjacency, so it is tried only when the
  // deltas are big. Its bytes are already entropy-coded, while deflate about halves run and raw
  // label bytes; pair bits hardly compress. Compare on that footing.
  if (graph_records_ && std::min(runs_size, pair_size) > n / 8) {
    trial_.clear();
    encode_graph(next, trial_);
    const std::size_t graph_size = trial_.size();
    if (graph_size < pair_size && 2 * graph_size < runs_size && 2 * graph_size < full_size) {
      out.resize(start);
      out.insert(out.end(), trial_.begin(), trial_.end());
      return RecordKind::graph;
    }
  }
  if (runs_size <= pair_size && runs_size <= full_size) return RecordKind::runs;
  out.resize(start);
  if (full_size <= pair_size) {
    encode_full(next, width_, out);
    return RecordKind::full;
  }
  codec::put_pair_record(previous, next, involved[0], involved[1], width_, out);
  return RecordKind::pair;
}

}  // namespace planmill
