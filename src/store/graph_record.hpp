#pragma once
// Graph records (RecordKind::graph, docs/format.md): every label of a plan, range-coded unit by
// unit in unit order, predicted from the labels of the neighbours already coded.
// Promises: encode_graph_record and decode_graph_record are exact inverses for a plan with labels
// below k; the encoder allocates nothing once its buffers have grown; the decoder checks every
// byte (false on any malformed, short or overlong record) and never reads out of bounds.
#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/store/plan_codec.hpp"

namespace planmill::codec {

// The neighbours v < u of every unit u, the ones already coded when u is.
[[nodiscard]] UnitAdjacency lower_part(const UnitAdjacency& adjacency);
// The largest neighbour count of a unit.
[[nodiscard]] std::size_t max_degree(const UnitAdjacency& adjacency);

// The coder's working memory, owned by the caller so that it is reused from record to record.
// candidate and candidate_count must hold max_degree(lower) entries; the others resize themselves.
struct GraphBuffers {
  std::vector<std::uint16_t>& probabilities;
  std::vector<std::uint32_t>& tree;
  std::vector<std::uint32_t>& position;
  std::vector<DistrictIndex>& candidate;
  std::vector<std::uint32_t>& candidate_count;
};

// Appends the graph record of `plan` (labels < k) to `out`; `lower` = lower_part(adjacency).
void encode_graph_record(std::span<const DistrictIndex> plan, std::size_t k,
                         const UnitAdjacency& lower, GraphBuffers buffers,
                         std::vector<std::uint8_t>& out);

// Decodes a graph record into `plan` (one label per unit); `adjacency` is the full adjacency
// (checked with valid_for). False when the bytes are not a graph record of k labels.
[[nodiscard]] bool decode_graph_record(std::span<const std::uint8_t> bytes, std::size_t k,
                                       const UnitAdjacency* adjacency,
                                       std::span<DistrictIndex> plan);

}  // namespace planmill::codec
