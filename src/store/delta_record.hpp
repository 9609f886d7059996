#pragma once
// Delta records (RecordKind::pair and RecordKind::runs, docs/format.md): a plan told as its
// changes from the previous plan of the chain.
// Promises: the writers only append to `out`, in exactly the layout the readers accept; the
// readers apply a record to the previous plan in place, check every byte (false on a malformed,
// short or overlong record, leaving `plan` unspecified) and never read out of bounds.
#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

#include "planmill/base/ids.hpp"
#include "store/codec_bytes.hpp"

namespace planmill::codec {

// One run of a runs record: `gap` unchanged units since the previous run, then `length` units
// given `label`; the label is written only when it is not the one guessed (`guessed` false).
inline void put_run(std::size_t gap, std::size_t length, bool guessed, DistrictIndex label,
                    std::size_t width, std::vector<std::uint8_t>& out) {
  put_varint(gap, out);
  put_varint(length * 2 + (guessed ? 0 : 1), out);
  if (!guessed) put_label(label, width, out);
}

// Bytes of a pair record whose two labels held `members` units together in the previous plan.
[[nodiscard]] inline std::size_t pair_record_size(std::size_t width, std::size_t members) {
  return 2 * width + (members + 7) / 8;
}

// Appends the pair record of the move from `previous` to `next`, where only units labelled a or
// b in `previous` change and they get a or b (a != b).
void put_pair_record(std::span<const DistrictIndex> previous, std::span<const DistrictIndex> next,
                     DistrictIndex a, DistrictIndex b, std::size_t width,
                     std::vector<std::uint8_t>& out);

[[nodiscard]] bool decode_pair_record(std::span<const std::uint8_t> bytes, std::size_t width,
                                      std::size_t district_count, std::span<DistrictIndex> plan);
[[nodiscard]] bool decode_runs_record(std::span<const std::uint8_t> bytes, std::size_t width,
                                      std::size_t district_count, std::span<DistrictIndex> plan);

}  // namespace planmill::codec
