#pragma once
// Byte-level pieces shared by the record kinds (docs/format.md, "Record kinds"): labels of 1 or
// 2 bytes little-endian, LEB128-style varints (7 bits a byte, high bit = more follows), and a
// bounds-checked reader that never reads past its span.
// Promises: put_* only append; Reader never throws and never reads out of bounds: on short or
// malformed input it sets ok = false and returns 0.
#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

#include "planmill/base/ids.hpp"

namespace planmill::codec {

inline void put_label(DistrictIndex d, std::size_t width, std::vector<std::uint8_t>& out) {
  out.push_back(static_cast<std::uint8_t>(d & 0xFF));
  if (width == 2) out.push_back(static_cast<std::uint8_t>(d >> 8));
}

inline void put_varint(std::uint64_t v, std::vector<std::uint8_t>& out) {
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

  // A varint of at most 10 bytes; a longer or cut-off one fails.
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

}  // namespace planmill::codec
