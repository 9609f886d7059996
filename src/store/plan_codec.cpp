// Record encodings of recorded plans; see plan_codec.hpp and docs/format.md.
#include "planmill/store/plan_codec.hpp"

#include <algorithm>
#include <cstring>

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

}  // namespace

void encode_full(std::span<const DistrictIndex> plan, std::size_t width,
                 std::vector<std::uint8_t>& out) {
  for (DistrictIndex d : plan) put_label(d, width, out);
}

RecordKind encode_delta(std::span<const DistrictIndex> previous,
                        std::span<const DistrictIndex> next, std::size_t width,
                        std::size_t district_count, std::vector<std::uint8_t>& out,
                        std::vector<DistrictIndex>& guess) {
  guess.assign(district_count, kNoDistrict);
  const std::size_t start = out.size();
  const std::size_t n = next.size();
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
  std::size_t changes = 0;
  std::size_t last_end = 0;
  for (std::size_t u = 0; u < n;) {
    // Most of a plan is unchanged: skip equal stretches a block at a time (memcmp is vectorised).
    constexpr std::size_t kBlock = 64;
    while (u + kBlock <= n &&
           std::memcmp(&previous[u], &next[u], kBlock * sizeof(DistrictIndex)) == 0)
      u += kBlock;
    if (u >= n) break;
    if (previous[u] == next[u]) {
      ++u;
      continue;
    }
    const DistrictIndex label = next[u];
    std::size_t end = u;
    while (end < n && previous[end] != next[end] && next[end] == label) {
      note(previous[end]);
      ++end;
    }
    note(label);
    changes += end - u;
    // Guess the label from the last run that started in the same old district (a merged pair
    // keeps swapping the same two labels); spell it out only when the guess is wrong.
    const bool guessed = guess[previous[u]] == label;
    guess[previous[u]] = label;
    put_varint(u - last_end, out);
    put_varint((end - u) * 2 + (guessed ? 0 : 1), out);
    if (!guessed) put_label(label, width, out);
    last_end = end;
    u = end;
  }
  if (changes == 0) return RecordKind::unchanged;
  const std::size_t runs_size = out.size() - start;
  const std::size_t full_size = n * width;
  std::size_t pair_size = static_cast<std::size_t>(-1);
  if (two_labels && involved[1] != kNoDistrict) {
    std::size_t members = 0;
    for (std::size_t u = 0; u < n; ++u)
      members += previous[u] == involved[0] || previous[u] == involved[1];
    pair_size = 2 * width + (members + 7) / 8;
  }
  if (runs_size <= pair_size && runs_size <= full_size) return RecordKind::runs;
  out.resize(start);
  if (full_size <= pair_size) {
    encode_full(next, width, out);
    return RecordKind::full;
  }
  const DistrictIndex a = involved[0], b = involved[1];
  put_label(a, width, out);
  put_label(b, width, out);
  std::uint8_t byte = 0;
  int bit = 0;
  for (std::size_t u = 0; u < n; ++u) {
    if (previous[u] != a && previous[u] != b) continue;
    if (next[u] == b) byte = static_cast<std::uint8_t>(byte | (1u << bit));
    if (++bit == 8) {
      out.push_back(byte);
      byte = 0;
      bit = 0;
    }
  }
  if (bit) out.push_back(byte);
  return RecordKind::pair;
}

bool decode_record(RecordKind kind, std::span<const std::uint8_t> bytes, std::size_t width,
                   std::size_t district_count, std::span<DistrictIndex> plan) {
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
  }
  return false;
}

}  // namespace planmill
