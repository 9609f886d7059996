// Delta records: pair writing and reading, runs reading; see delta_record.hpp and docs/format.md.
#include "store/delta_record.hpp"

#include <algorithm>

namespace planmill::codec {
namespace {

// Whether one of 64 labels is a or b, written so that it vectorises.
bool has_either(const DistrictIndex* labels, DistrictIndex a, DistrictIndex b) {
  std::uint16_t hits = 0;
  for (int i = 0; i < 64; ++i)
    hits = static_cast<std::uint16_t>(hits + (labels[i] == a) + (labels[i] == b));
  return hits != 0;
}

}  // namespace

void put_pair_record(std::span<const DistrictIndex> previous, std::span<const DistrictIndex> next,
                     DistrictIndex a, DistrictIndex b, std::size_t width,
                     std::vector<std::uint8_t>& out) {
  const std::size_t n = previous.size();
  put_label(a, width, out);
  put_label(b, width, out);
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
}

bool decode_pair_record(std::span<const std::uint8_t> bytes, std::size_t width,
                        std::size_t district_count, std::span<DistrictIndex> plan) {
  const std::size_t n = plan.size();
  Reader in{bytes};
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

bool decode_runs_record(std::span<const std::uint8_t> bytes, std::size_t width,
                        std::size_t district_count, std::span<DistrictIndex> plan) {
  const std::size_t n = plan.size();
  Reader in{bytes};
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

}  // namespace planmill::codec
