#pragma once
// Graph records (RecordKind::graph, docs/format.md): every label of a plan, range-coded unit by
// unit in unit order, predicted from the labels of the neighbours already coded.
// The encoder is ChainEncoder::encode_graph (chain_encoder.cpp), over the same GraphModel
// (graph_model.hpp), so that its loop compiles exactly as before the codec was split.
// Promises: the decoder checks every byte (false on any malformed, short or overlong record) and
// never reads out of bounds.
#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/store/plan_codec.hpp"

namespace planmill::codec {

// The neighbours v < u of every unit u, the ones already coded when u is.
[[nodiscard]] UnitAdjacency lower_part(AdjacencyView adjacency);

// Decodes a graph record into `plan` (one label per unit); `adjacency` is the full adjacency
// (checked with valid_for; an empty view fails). False when the bytes are not a graph record of
// k labels.
[[nodiscard]] bool decode_graph_record(std::span<const std::uint8_t> bytes, std::size_t k,
                                       AdjacencyView adjacency, std::span<DistrictIndex> plan);

}  // namespace planmill::codec
