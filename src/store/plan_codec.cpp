// The plan codec's free functions: the adjacency of a map, full records and the decoder of every record kind;
// see plan_codec.hpp and docs/format.md. The pieces: codec_bytes.hpp (labels, varints, reader),
// delta_record.* (pair and runs), graph_record.* with range_coder.hpp and fenwick.hpp (graph),
// chain_encoder.cpp (ChainEncoder).
#include "planmill/store/plan_codec.hpp"

#include "planmill/graph/unit_graph.hpp"
#include "store/codec_bytes.hpp"
#include "store/delta_record.hpp"
#include "store/graph_record.hpp"

namespace planmill {

UnitAdjacency unit_adjacency(const UnitGraph& graph) {
  const AdjacencyView view = graph.adjacency();
  return {{view.offsets().begin(), view.offsets().end()},
          {view.targets().begin(), view.targets().end()}};
}

void encode_full(std::span<const DistrictIndex> plan, std::size_t width,
                 std::vector<std::uint8_t>& out) {
  if (width == 1) {
    const std::size_t at = out.size();
    out.resize(at + plan.size());
    for (std::size_t u = 0; u < plan.size(); ++u) out[at + u] = static_cast<std::uint8_t>(plan[u]);
    return;
  }
  for (DistrictIndex d : plan) codec::put_label(d, width, out);
}

bool decode_record(RecordKind kind, std::span<const std::uint8_t> bytes, std::size_t width,
                   std::size_t district_count, std::span<DistrictIndex> plan,
                   const UnitAdjacency* adjacency) {
  const std::size_t n = plan.size();
  switch (kind) {
    case RecordKind::full: {
      if (bytes.size() != n * width) return false;
      codec::Reader in{bytes};
      for (std::size_t u = 0; u < n; ++u) {
        plan[u] = in.label(width);
        if (plan[u] >= district_count) return false;
      }
      return true;
    }
    case RecordKind::unchanged:
      return bytes.empty();
    case RecordKind::pair:
      return codec::decode_pair_record(bytes, width, district_count, plan);
    case RecordKind::runs:
      return codec::decode_runs_record(bytes, width, district_count, plan);
    case RecordKind::graph:
      return codec::decode_graph_record(bytes, district_count,
                                        adjacency ? adjacency->view() : AdjacencyView{}, plan);
  }
  return false;
}

}  // namespace planmill
