#pragma once
// Fenwick (binary indexed) tree counting occupied positions, over a caller-owned array, so the
// graph coder keeps one buffer across records and allocates nothing per record.
// Promises: tree.size() = positions + 1 (slot 0 unused), all zero = nothing occupied; add() and
// before() cost O(log positions), select() finds the m-th occupied position in O(log positions).
#include <bit>
#include <cstddef>
#include <cstdint>
#include <vector>

namespace planmill::codec {

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

}  // namespace planmill::codec
