#pragma once
// Byte encoding of one recorded plan relative to the previous one (docs/format.md, "Record kinds").
// Labels are 1 byte when the district count is at most 255, else 2 bytes little-endian.
#include <cstdint>
#include <span>
#include <vector>

#include "planmill/base/ids.hpp"

namespace planmill {

enum class RecordKind : std::uint8_t {
  full = 0,       // every label, in unit order
  unchanged = 1,  // no bytes
  pair = 2,       // labels a, b; then one bit per unit labelled a or b before (unit order): 1 = b
  // Per run of changed units with one new label: varint gap since the previous run, varint
  // length*2 + f, and the label only when f = 1; f = 0 means the label given to the last run
  // (of this record) that started on a unit of the same old district.
  runs = 3,
};

[[nodiscard]] inline std::size_t label_width(std::size_t district_count) noexcept {
  return district_count <= 255 ? 1 : 2;
}

// Appends the full plan to `out`.
void encode_full(std::span<const DistrictIndex> plan, std::size_t width,
                 std::vector<std::uint8_t>& out);
// Appends the cheapest encoding of `next` given `previous` and returns its kind. `previous` and
// `next` have the same size; `scratch` (k entries) is reused between calls.
RecordKind encode_delta(std::span<const DistrictIndex> previous,
                        std::span<const DistrictIndex> next, std::size_t width,
                        std::size_t district_count, std::vector<std::uint8_t>& out,
                        std::vector<DistrictIndex>& scratch);
// Applies one record to `plan` in place (for full records `plan` is overwritten). Returns false,
// leaving `plan` unspecified, when the bytes do not form a valid record of that kind.
[[nodiscard]] bool decode_record(RecordKind kind, std::span<const std::uint8_t> bytes,
                                 std::size_t width, std::size_t district_count,
                                 std::span<DistrictIndex> plan);

}  // namespace planmill
