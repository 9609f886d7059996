#pragma once
// Byte encoding of one recorded plan, alone or relative to the previous one (docs/format.md,
// "Record kinds"). Labels are 1 byte when the district count is at most 255, else 2 bytes
// little-endian. ChainEncoder is the writer's side: it keeps the previous plan and every buffer,
// so that encoding a record allocates nothing once warm.
#include <cstdint>
#include <span>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/graph/adjacency.hpp"

namespace planmill {

class UnitGraph;

enum class RecordKind : std::uint8_t {
  full = 0,       // every label, in unit order
  unchanged = 1,  // no bytes
  pair = 2,       // labels a, b; then one bit per unit labelled a or b before (unit order): 1 = b
  // Per run of changed units with one new label: varint gap since the previous run, varint
  // length*2 + f, and the label only when f = 1; f = 0 means the label given to the last run
  // (of this record) that started on a unit of the same old district.
  runs = 3,
  // Every label, range-coded unit by unit with the labels of already coded neighbours as the
  // prediction (needs the unit adjacency of the file).
  graph = 4,
};
inline constexpr std::uint64_t kRecordKindCount = 5;

// Records of these kinds decode without the previous plan.
[[nodiscard]] constexpr bool is_self_contained(RecordKind kind) noexcept {
  return kind == RecordKind::full || kind == RecordKind::graph;
}

[[nodiscard]] inline std::size_t label_width(std::size_t district_count) noexcept {
  return district_count <= 255 ? 1 : 2;
}

// The unit adjacency a plan file stores (docs/format.md, /unit_adjacency), walked through view():
// the neighbours of u are neighbors[offsets[u] .. offsets[u+1]).
// Empty offsets = no adjacency known (graph records are then never written).
struct UnitAdjacency {
  std::vector<AdjacencyView::Offset> offsets;
  std::vector<AdjacencyView::Vertex> neighbors;
  [[nodiscard]] AdjacencyView view() const noexcept { return {offsets, neighbors}; }
  [[nodiscard]] bool empty() const noexcept { return offsets.empty(); }
  [[nodiscard]] bool valid_for(std::size_t units) const noexcept {
    return view().valid_for(units);
  }
};
[[nodiscard]] UnitAdjacency unit_adjacency(const UnitGraph& graph);

// Appends the full plan to `out` (kind full).
void encode_full(std::span<const DistrictIndex> plan, std::size_t width,
                 std::vector<std::uint8_t>& out);

// Applies one record to `plan` in place (self-contained kinds overwrite it). Returns false,
// leaving `plan` unspecified, when the bytes do not form a valid record of that kind (graph
// records also fail without a valid adjacency).
[[nodiscard]] bool decode_record(RecordKind kind, std::span<const std::uint8_t> bytes,
                                 std::size_t width, std::size_t district_count,
                                 std::span<DistrictIndex> plan,
                                 const UnitAdjacency* adjacency = nullptr);

class ChainEncoder {
 public:
  // `adjacency` may be null or empty (no graph records); the encoder keeps the part it needs.
  ChainEncoder(std::size_t unit_count, std::size_t district_count, const UnitAdjacency* adjacency);

  // Appends the encoding of `plan` to `out` and returns its kind: a self-contained kind when
  // `self_contained` (or for the first plan), else the smallest of the delta kinds and graph.
  RecordKind encode(std::span<const DistrictIndex> plan, bool self_contained,
                    std::vector<std::uint8_t>& out);
  // The same bytes as encode(), looking only at the units of `maybe_changed`, which must hold
  // every unit whose label differs from the previous plan (repeats and unchanged units are fine).
  // Only those units are checked for a bad label; a unit missing from the list makes the record
  // wrong (debug builds assert). Throws std::invalid_argument on a unit index out of range.
  RecordKind encode(std::span<const DistrictIndex> plan, std::span<const UnitIndex> maybe_changed,
                    bool self_contained, std::vector<std::uint8_t>& out);
  // Appends the graph encoding of `plan` (needs an adjacency), independent of previous plans.
  void encode_graph(std::span<const DistrictIndex> plan, std::vector<std::uint8_t>& out);

 private:
  // Fill changed_ (ascending) with the units whose label differs from previous_.
  void find_changes_by_scan(std::span<const DistrictIndex> next);
  void find_changes_among(std::span<const DistrictIndex> next,
                          std::span<const UnitIndex> maybe_changed);
  // Encodes the changes listed in changed_ and applies them to previous_.
  RecordKind encode_changes(std::span<const DistrictIndex> next, std::vector<std::uint8_t>& out);
  RecordKind encode_delta(std::span<const DistrictIndex> next, std::vector<std::uint8_t>& out);
  void take_whole(std::span<const DistrictIndex> plan);

  std::size_t n_, k_, width_;
  bool graph_records_;   // an adjacency was given
  UnitAdjacency lower_;  // neighbours v < u of each unit u
  bool have_previous_ = false;
  std::vector<DistrictIndex> previous_;
  std::vector<std::uint32_t> label_size_;  // units per label in previous_
  std::vector<std::uint32_t> changed_;     // units that differ, of the record being encoded
  std::vector<DistrictIndex> guess_;       // per old label, for runs
  std::vector<std::uint64_t> marked_;      // one bit per unit, all zero between records
  std::vector<std::uint8_t> trial_;        // graph encoding tried against a delta
  // Graph coder state.
  std::vector<std::uint16_t> probabilities_;
  std::vector<std::uint32_t> tree_;       // Fenwick tree over recency positions of labels
  std::vector<std::uint32_t> position_;   // per label
  std::vector<DistrictIndex> candidate_;  // per unit: distinct labels of coded neighbours
  std::vector<std::uint32_t> candidate_count_;
};

}  // namespace planmill
