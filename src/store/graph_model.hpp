#pragma once
// The model of graph records (RecordKind::graph, docs/format.md), shared by the encoder
// (ChainEncoder::encode_graph) and the decoder (decode_graph_record): each unit's label is coded
// against the labels of its neighbours already coded (most frequent first), else as its rank in a
// recency list of the other labels (Elias gamma).
// Promises: run<true> with a RangeEncoder and run<false> with a RangeDecoder walk the same
// contexts, so decoding returns the encoded plan; run<false> fails (false) on bytes that no plan
// encodes to, never reads out of bounds and leaves labels below k. The buffers are the caller's
// and are only resized, so a warm encoder allocates nothing. A template in a header so that each
// side inlines the coder into its loop.
#include <algorithm>
#include <bit>
#include <cstddef>
#include <cstdint>
#include <span>
#include <utility>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/graph/adjacency.hpp"
#include "planmill/store/plan_codec.hpp"
#include "store/fenwick.hpp"
#include "store/range_coder.hpp"

namespace planmill::codec {

// Context layout: 54 candidate contexts, then two sets (no candidates / some) of 16 gamma contexts.
inline constexpr std::size_t kCandidateContexts = 3 * 3 * 3 * 2;
inline constexpr std::size_t kGammaContexts = 16;
inline constexpr std::size_t kGraphContexts = kCandidateContexts + 2 * kGammaContexts;

inline std::size_t candidate_context(std::size_t candidates, std::size_t i, std::uint32_t count,
                              bool is_previous_label) {
  const std::size_t c3 = std::min<std::size_t>(candidates, 3) - 1;
  const std::size_t i3 = std::min<std::size_t>(i, 2);
  const std::size_t n3 = std::min<std::uint32_t>(count, 3) - 1;
  return ((c3 * 3 + i3) * 3 + n3) * 2 + (is_previous_label ? 1 : 0);
}

inline constexpr std::size_t kDirectRankLabels = 512;

// The graph model, shared by encoder and decoder: Io::code/direct encode the given bit or return
// the decoded one. For the encoder `plan` holds the labels; the decoder fills it unit by unit.
struct GraphModel {
  std::size_t n, k;
  AdjacencyView adjacency;  // lower part only: neighbours v < u (lower_part())
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
    const std::uint64_t* const offsets = adjacency.offsets().data();
    const std::uint32_t* const neighbors = adjacency.targets().data();
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

}  // namespace planmill::codec
