// Record encodings of recorded plans; see plan_codec.hpp and docs/format.md.
#include "planmill/store/plan_codec.hpp"

#include <algorithm>
#include <bit>
#include <cassert>
#include <cstring>
#include <functional>
#include <numeric>
#include <stdexcept>
#include <string>

#include "planmill/graph/unit_graph.hpp"

namespace planmill {
namespace {

void put_label(DistrictIndex d, std::size_t width, std::vector<std::uint8_t>& out) {
  out.push_back(static_cast<std::uint8_t>(d & 0xFF));
  if (width == 2) out.push_back(static_cast<std::uint8_t>(d >> 8));
}

void put_varint(std::uint64_t v, std::vector<std::uint8_t>& out) {
  while (v >= 0x80) {
    out.push_back(static_cast<std::uint8_t>(v | 0x80));
    v >>= 7;
  }
  out.push_back(static_cast<std::uint8_t>(v));
}

struct Reader {
  std::span<const std::uint8_t> bytes;
  std::size_t at = 0;
  bool ok = true;

  std::uint64_t varint() {
    std::uint64_t v = 0;
    for (int shift = 0; shift < 64; shift += 7) {
      if (at >= bytes.size()) break;
      const std::uint8_t b = bytes[at++];
      v |= static_cast<std::uint64_t>(b & 0x7F) << shift;
      if (!(b & 0x80)) return v;
    }
    ok = false;
    return 0;
  }
  DistrictIndex label(std::size_t width) {
    if (at + width > bytes.size()) {
      ok = false;
      return 0;
    }
    DistrictIndex d = bytes[at++];
    if (width == 2) d = static_cast<DistrictIndex>(d | (bytes[at++] << 8));
    return d;
  }
};

// ------------------------------------------------------------------------------ graph records
// Binary range coder with adaptive 11-bit probabilities of a 0 bit (adaptation shift 5) and
// fixed-probability "direct" bits, in the well-known byte-wise form with carry propagation
// (docs/format.md spells out the decoder).
constexpr std::uint32_t kProbabilityOne = 1u << 11;
constexpr int kAdaptShift = 5;
constexpr std::uint32_t kTop = 1u << 24;

class RangeEncoder {
 public:
  explicit RangeEncoder(std::vector<std::uint8_t>& out) : out_(out) {}
  int code(std::uint16_t& p, int bit) {
    const std::uint32_t bound = (range_ >> 11) * p;
    if (bit == 0) {
      range_ = bound;
      p = static_cast<std::uint16_t>(p + ((kProbabilityOne - p) >> kAdaptShift));
    } else {
      low_ += bound;
      range_ -= bound;
      p = static_cast<std::uint16_t>(p - (p >> kAdaptShift));
    }
    normalize();
    return bit;
  }
  int direct(int bit) {
    range_ >>= 1;
    if (bit) low_ += range_;
    normalize();
    return bit;
  }
  void finish() {
    for (int i = 0; i < 5; ++i) shift_low();
  }

 private:
  void normalize() {
    while (range_ < kTop) {
      range_ <<= 8;
      shift_low();
    }
  }
  void shift_low() {
    if (static_cast<std::uint32_t>(low_) < 0xFF000000u || (low_ >> 32) != 0) {
      const auto carry = static_cast<std::uint8_t>(low_ >> 32);
      std::uint8_t pending = cache_;
      do {
        out_.push_back(static_cast<std::uint8_t>(pending + carry));
        pending = 0xFF;
      } while (--cache_size_ != 0);
      cache_ = static_cast<std::uint8_t>(low_ >> 24);
    }
    ++cache_size_;
    low_ = (low_ & 0x00FFFFFFu) << 8;
  }

  std::vector<std::uint8_t>& out_;
  std::uint64_t low_ = 0;
  std::uint32_t range_ = 0xFFFFFFFFu;
  std::uint8_t cache_ = 0;
  std::uint64_t cache_size_ = 1;
};

class RangeDecoder {
 public:
  explicit RangeDecoder(std::span<const std::uint8_t> bytes) : bytes_(bytes) {
    ok = bytes.size() >= 5 && bytes[0] == 0;
    for (int i = 0; i < 5; ++i) code_ = (code_ << 8) | next_byte();
  }
  int code(std::uint16_t& p, int /*bit*/) {
    const std::uint32_t bound = (range_ >> 11) * p;
    int bit;
    if (code_ < bound) {
      range_ = bound;
      p = static_cast<std::uint16_t>(p + ((kProbabilityOne - p) >> kAdaptShift));
      bit = 0;
    } else {
      code_ -= bound;
      range_ -= bound;
      p = static_cast<std::uint16_t>(p - (p >> kAdaptShift));
      bit = 1;
    }
    normalize();
    return bit;
  }
  int direct(int /*bit*/) {
    range_ >>= 1;
    const int bit = code_ >= range_ ? 1 : 0;
    if (bit) code_ -= range_;
    normalize();
    return bit;
  }
  [[nodiscard]] bool finished_exactly() const noexcept { return ok && at_ == bytes_.size(); }
  bool ok = true;

 private:
  void normalize() {
    while (range_ < kTop) {
      range_ <<= 8;
      code_ = (code_ << 8) | next_byte();
    }
  }
  std::uint32_t next_byte() {
    if (at_ < bytes_.size()) return bytes_[at_++];
    ok = false;
    return 0;
  }

  std::span<const std::uint8_t> bytes_;
  std::size_t at_ = 0;
  std::uint32_t range_ = 0xFFFFFFFFu;
  std::uint32_t code_ = 0;
};

// Context layout: 54 candidate contexts, then two sets (no candidates / some) of 16 gamma contexts.
constexpr std::size_t kCandidateContexts = 3 * 3 * 3 * 2;
constexpr std::size_t kGammaContexts = 16;
constexpr std::size_t kGraphContexts = kCandidateContexts + 2 * kGammaContexts;

std::size_t candidate_context(std::size_t candidates, std::size_t i, std::uint32_t count,
                              bool is_previous_label) {
  const std::size_t c3 = std::min<std::size_t>(candidates, 3) - 1;
  const std::size_t i3 = std::min<std::size_t>(i, 2);
  const std::size_t n3 = std::min<std::uint32_t>(count, 3) - 1;
  return ((c3 * 3 + i3) * 3 + n3) * 2 + (is_previous_label ? 1 : 0);
}

constexpr std::size_t kDirectRankLabels = 512;

// Fenwick tree counting occupied recency positions (1-based inside).
struct Fenwick {
  std::vector<std::uint32_t>& tree;
  void add(std::size_t position, int delta) {
    for (std::size_t i = position + 1; i < tree.size(); i += i & (~i + 1))
      tree[i] = static_cast<std::uint32_t>(static_cast<int>(tree[i]) + delta);
  }
  // Occupied positions < position.
  [[nodiscard]] std::uint32_t before(std::size_t position) const {
    std::uint32_t sum = 0;
    for (std::size_t i = position; i > 0; i -= i & (~i + 1)) sum += tree[i];
    return sum;
  }
  // Position of the m-th occupied position (m >= 1); tree.size() - 1 if there are fewer.
  [[nodiscard]] std::size_t select(std::uint32_t m) const {
    std::size_t at = 0;
    for (std::size_t step = std::bit_floor(tree.size() - 1); step > 0; step >>= 1)
      if (at + step < tree.size() && tree[at + step] < m) {
        at += step;
        m -= tree[at];
      }
    return at;  // 0-based position = (1-based index at + 1) - 1
  }
};

// The graph model, shared by encoder and decoder: Io::code/direct encode the given bit or return
// the decoded one. For the encoder `plan` holds the labels; the decoder fills it unit by unit.
struct GraphModel {
  std::size_t n, k;
  const UnitAdjacency& adjacency;  // lower part only: neighbours v < u (lower_part())
  std::vector<std::uint16_t>& probabilities;
  std::vector<std::uint32_t>& tree;
  std::vector<std::uint32_t>& position;
  std::vector<DistrictIndex>& candidate;
  std::vector<std::uint32_t>& candidate_count;

  template <bool kEncoding, typename Io, typename Label>
  bool run(Io& io, std::span<Label> plan) {
    probabilities.assign(kGraphContexts, static_cast<std::uint16_t>(kProbabilityOne / 2));
    // Recency list of labels: position n - 1 - u for a label whose latest run of units started
    // at u, position n + d for a label d not seen yet. Smaller = earlier in the list.
    // The decoder selects by rank in a Fenwick tree; the encoder counts directly for few labels.
    const bool use_tree = !kEncoding || k > kDirectRankLabels;
    tree.assign(use_tree ? n + k + 1 : 1, 0);
    position.resize(k);
    Fenwick fenwick{tree};
    for (std::size_t d = 0; d < k; ++d) {
      position[d] = static_cast<std::uint32_t>(n + d);
      if (use_tree) fenwick.add(n + d, 1);
    }
    // Raw pointers: the coder's byte stores may alias anything, so keep the bases in registers.
    const std::uint64_t* const offsets = adjacency.offsets.data();
    const std::uint32_t* const neighbors = adjacency.neighbors.data();
    std::uint16_t* const probs = probabilities.data();
    DistrictIndex* const cand = candidate.data();
    std::uint32_t* const cnt = candidate_count.data();
    std::uint32_t* const pos = position.data();
    DistrictIndex previous = kNoDistrict;
    for (std::size_t u = 0; u < n; ++u) {
      std::size_t c = 0;
      std::uint64_t e = offsets[u];
      const std::uint64_t e_end = offsets[u + 1];
      if (e < e_end) {
        // Usually every coded neighbour has one label: count that stretch without searching.
        cand[0] = plan[neighbors[e]];
        cnt[0] = 1;
        c = 1;
        while (++e < e_end && plan[neighbors[e]] == cand[0]) ++cnt[0];
      }
      for (; e < e_end; ++e) {
        const DistrictIndex d = plan[neighbors[e]];
        std::size_t j = 0;
        while (j < c && cand[j] != d) ++j;
        if (j == c) {
          cand[c] = d;
          cnt[c++] = 0;
        }
        ++cnt[j];
      }
      // Most frequent first, ties by smaller label.
      for (std::size_t i = 1; i < c; ++i)
        for (std::size_t j = i; j > 0; --j) {
          const bool before =
              cnt[j] > cnt[j - 1] || (cnt[j] == cnt[j - 1] && cand[j] < cand[j - 1]);
          if (!before) break;
          std::swap(cand[j], cand[j - 1]);
          std::swap(cnt[j], cnt[j - 1]);
        }
      DistrictIndex label = kEncoding ? plan[u] : kNoDistrict;
      bool found = false;
      for (std::size_t i = 0; i < c && !found; ++i) {
        std::uint16_t& p = probs[candidate_context(c, i, cnt[i], cand[i] == previous)];
        if (io.code(p, kEncoding && cand[i] == label ? 1 : 0)) {
          label = cand[i];
          found = true;
        }
      }
      if (!found) {
        // Rank among the labels that are not candidates, in recency-list order, as Elias gamma
        // of rank + 1: adaptive unary length, then the bits below the leading one.
        std::uint16_t* gamma = &probs[kCandidateContexts + (c > 0 ? kGammaContexts : 0)];
        std::uint32_t m = 0;
        if constexpr (kEncoding) {
          const std::uint32_t mine = pos[label];
          std::uint32_t rank = 0;
          if (use_tree) {
            rank = fenwick.before(mine);
          } else {
            for (std::size_t d = 0; d < k; ++d) rank += pos[d] < mine;
          }
          for (std::size_t i = 0; i < c; ++i) rank -= pos[cand[i]] < mine;
          m = rank + 1;
          const int length = std::bit_width(m);
          for (int j = 0; j + 1 < length; ++j) io.code(gamma[j], 1);
          io.code(gamma[length - 1], 0);
          for (int j = length - 2; j >= 0; --j) io.direct(static_cast<int>((m >> j) & 1));
        } else {
          int length = 1;
          while (io.code(gamma[length - 1], 0)) {
            if (++length > static_cast<int>(kGammaContexts)) return false;
          }
          m = 1;
          for (int j = length - 2; j >= 0; --j)
            m = (m << 1) | static_cast<std::uint32_t>(io.direct(0));
          if (m > k - c) return false;
          // The m-th non-candidate: skip the candidates that come before it.
          std::size_t extra = 0, at = 0;
          // Finite: `extra` only grows and never exceeds c, so this settles within c + 1 rounds.
          for (;;) {
            at = fenwick.select(static_cast<std::uint32_t>(m + extra));
            std::size_t before = 0;
            for (std::size_t i = 0; i < c; ++i) before += pos[cand[i]] <= at;
            if (before == extra) break;
            extra = before;
          }
          if (at >= n + k) return false;
          label = kNoDistrict;
          if (at >= n) {
            label = static_cast<DistrictIndex>(at - n);
          } else {
            // Positions below n belong to the label whose latest run started at unit n - 1 - at.
            label = plan[n - 1 - at];
          }
          if (pos[label] != at) return false;
        }
      }
      if constexpr (!kEncoding) {
        if (!io.ok) return false;
        plan[u] = label;
      }
      if (label != previous) {
        if (use_tree) fenwick.add(pos[label], -1);
        pos[label] = static_cast<std::uint32_t>(n - 1 - u);
        if (use_tree) fenwick.add(pos[label], 1);
        previous = label;
      }
    }
    return true;
  }
};

[[noreturn]] void throw_bad_label(DistrictIndex d, std::size_t k) {
  throw std::invalid_argument("plan has label " + std::to_string(d) + " but only " +
                              std::to_string(k) + " districts");
}

// The neighbours v < u of every unit u, the ones already coded when u is.
UnitAdjacency lower_part(const UnitAdjacency& adjacency) {
  UnitAdjacency lower;
  lower.offsets.reserve(adjacency.offsets.size());
  lower.offsets.push_back(0);
  for (std::size_t u = 0; u + 1 < adjacency.offsets.size(); ++u) {
    for (std::uint64_t e = adjacency.offsets[u]; e < adjacency.offsets[u + 1]; ++e)
      if (adjacency.neighbors[e] < u) lower.neighbors.push_back(adjacency.neighbors[e]);
    lower.offsets.push_back(lower.neighbors.size());
  }
  return lower;
}

std::size_t max_degree(const UnitAdjacency& adjacency) {
  std::size_t most = 0;
  for (std::size_t u = 0; u + 1 < adjacency.offsets.size(); ++u)
    most = std::max<std::size_t>(most, adjacency.offsets[u + 1] - adjacency.offsets[u]);
  return most;
}

// Whether one of 64 labels is a or b, written so that it vectorises.
bool has_either(const DistrictIndex* labels, DistrictIndex a, DistrictIndex b) {
  std::uint16_t hits = 0;
  for (int i = 0; i < 64; ++i)
    hits = static_cast<std::uint16_t>(hits + (labels[i] == a) + (labels[i] == b));
  return hits != 0;
}

}  // namespace

bool UnitAdjacency::valid_for(std::size_t units) const noexcept {
  if (offsets.size() != units + 1 || offsets.front() != 0 || offsets.back() != neighbors.size())
    return false;
  for (std::size_t u = 0; u < units; ++u)
    if (offsets[u + 1] < offsets[u]) return false;
  return std::all_of(neighbors.begin(), neighbors.end(),
                     [&](std::uint32_t v) { return v < units; });
}

UnitAdjacency unit_adjacency(const UnitGraph& graph) {
  UnitAdjacency a;
  a.offsets.reserve(graph.unit_count() + 1);
  a.offsets.push_back(0);
  for (UnitIndex u = 0; u < graph.unit_count(); ++u) {
    for (UnitIndex v : graph.neighbors(u)) a.neighbors.push_back(static_cast<std::uint32_t>(v));
    a.offsets.push_back(a.neighbors.size());
  }
  return a;
}

void encode_full(std::span<const DistrictIndex> plan, std::size_t width,
                 std::vector<std::uint8_t>& out) {
  if (width == 1) {
    const std::size_t at = out.size();
    out.resize(at + plan.size());
    for (std::size_t u = 0; u < plan.size(); ++u) out[at + u] = static_cast<std::uint8_t>(plan[u]);
    return;
  }
  for (DistrictIndex d : plan) put_label(d, width, out);
}

// --------------------------------------------------------------------------------- encoder

ChainEncoder::ChainEncoder(std::size_t unit_count, std::size_t district_count,
                           const UnitAdjacency* adjacency)
    : n_(unit_count),
      k_(district_count),
      width_(label_width(district_count)),
      adjacency_(adjacency && !adjacency->empty() ? adjacency : nullptr),
      lower_(adjacency_ ? lower_part(*adjacency_) : UnitAdjacency{}),
      previous_(unit_count),
      label_size_(district_count),
      guess_(district_count),
      marked_((unit_count + 63) / 64) {
  changed_.reserve(unit_count);
  if (adjacency_) {
    const std::size_t degree = max_degree(lower_);
    candidate_.resize(degree);
    candidate_count_.resize(degree);
  }
}

void ChainEncoder::encode_graph(std::span<const DistrictIndex> plan,
                                std::vector<std::uint8_t>& out) {
  RangeEncoder io(out);
  GraphModel model{n_, k_, lower_, probabilities_, tree_, position_, candidate_, candidate_count_};
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
    if (adjacency_) {
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
    put_varint(u - last_end, out);
    put_varint((end - u) * 2 + (guessed ? 0 : 1), out);
    if (!guessed) put_label(label, width_, out);
    last_end = end;
    i = j;
  }
  if (changed_.empty()) return RecordKind::unchanged;
  const std::size_t runs_size = out.size() - start;
  const std::size_t full_size = n * width_;
  constexpr auto kNever = static_cast<std::size_t>(-1);
  std::size_t pair_size = kNever;
  if (two_labels && involved[1] != kNoDistrict)
    pair_size = 2 * width_ + (label_size_[involved[0]] + label_size_[involved[1]] + 7) / 8;
  // A graph record costs a full pass over the plan's adjacency, so it is tried only when the
  // deltas are big. Its bytes are already entropy-coded, while deflate about halves run and raw
  // label bytes; pair bits hardly compress. Compare on that footing.
  if (adjacency_ && std::min(runs_size, pair_size) > n / 8) {
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
  const DistrictIndex a = involved[0], b = involved[1];
  put_label(a, width_, out);
  put_label(b, width_, out);
  std::uint8_t byte = 0;
  int bit = 0;
  // Districts are compact in unit order: skip blocks without a member of a or b with a check
  // the compiler vectorises, and look at single units only inside blocks that have one.
  constexpr std::size_t kBlock = 64;
  for (std::size_t base = 0; base < n; base += kBlock) {
    const std::size_t end = std::min(n, base + kBlock);
    if (end - base == kBlock && !has_either(previous.data() + base, a, b)) continue;
    for (std::size_t u = base; u < end; ++u) {
      if (previous[u] != a && previous[u] != b) continue;
      if (next[u] == b) byte = static_cast<std::uint8_t>(byte | (1u << bit));
      if (++bit == 8) {
        out.push_back(byte);
        byte = 0;
        bit = 0;
      }
    }
  }
  if (bit) out.push_back(byte);
  return RecordKind::pair;
}

// --------------------------------------------------------------------------------- decoder

bool decode_record(RecordKind kind, std::span<const std::uint8_t> bytes, std::size_t width,
                   std::size_t district_count, std::span<DistrictIndex> plan,
                   const UnitAdjacency* adjacency) {
  const std::size_t n = plan.size();
  Reader in{bytes};
  switch (kind) {
    case RecordKind::full: {
      if (bytes.size() != n * width) return false;
      for (std::size_t u = 0; u < n; ++u) {
        plan[u] = in.label(width);
        if (plan[u] >= district_count) return false;
      }
      return true;
    }
    case RecordKind::unchanged:
      return bytes.empty();
    case RecordKind::pair: {
      const DistrictIndex a = in.label(width), b = in.label(width);
      if (!in.ok || a >= district_count || b >= district_count || a == b) return false;
      std::size_t bit = 0;
      for (std::size_t u = 0; u < n; ++u) {
        if (plan[u] != a && plan[u] != b) continue;
        const std::size_t at = in.at + bit / 8;
        if (at >= bytes.size()) return false;
        plan[u] = (bytes[at] >> (bit % 8)) & 1 ? b : a;
        ++bit;
      }
      return in.at + (bit + 7) / 8 == bytes.size();
    }
    case RecordKind::runs: {
      std::vector<DistrictIndex> guess(district_count, kNoDistrict);
      std::size_t u = 0;
      while (in.at < bytes.size()) {
        const std::uint64_t gap = in.varint();
        const std::uint64_t coded = in.varint();
        const std::uint64_t length = coded / 2;
        if (!in.ok || length == 0 || gap > n - u || length > n - u - gap) return false;
        u += gap;
        const DistrictIndex old_label = plan[u];
        if (old_label >= district_count) return false;
        const DistrictIndex label = coded % 2 ? in.label(width) : guess[old_label];
        if (!in.ok || label >= district_count) return false;
        guess[old_label] = label;
        std::fill_n(plan.begin() + static_cast<std::ptrdiff_t>(u), length, label);
        u += length;
      }
      return true;
    }
    case RecordKind::graph: {
      if (!adjacency || !adjacency->valid_for(n) || district_count == 0 ||
          district_count > kNoDistrict)
        return false;
      std::vector<std::uint16_t> probabilities;
      std::vector<std::uint32_t> tree, position;
      const UnitAdjacency lower = lower_part(*adjacency);
      const std::size_t degree = max_degree(lower);
      std::vector<DistrictIndex> candidate(degree);
      std::vector<std::uint32_t> candidate_count(degree);
      RangeDecoder io(bytes);
      GraphModel model{n,    district_count, lower,     probabilities,
                       tree, position,       candidate, candidate_count};
      return model.run<false>(io, plan) && io.finished_exactly();
    }
  }
  return false;
}

}  // namespace planmill
