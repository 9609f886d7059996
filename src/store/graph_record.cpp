// Graph records: the decoder and the adjacency it needs; see graph_record.hpp and docs/format.md.
#include "store/graph_record.hpp"

#include "store/graph_model.hpp"
#include "store/range_coder.hpp"

namespace planmill::codec {

UnitAdjacency lower_part(AdjacencyView adjacency) {
  UnitAdjacency lower;
  lower.offsets.reserve(adjacency.vertex_count() + 1);
  lower.offsets.push_back(0);
  for (AdjacencyView::Vertex u = 0; u < adjacency.vertex_count(); ++u) {
    for (const AdjacencyView::Vertex v : adjacency.neighbors(u))
      if (v < u) lower.neighbors.push_back(v);
    lower.offsets.push_back(lower.neighbors.size());
  }
  return lower;
}

bool decode_graph_record(std::span<const std::uint8_t> bytes, std::size_t k,
                         AdjacencyView adjacency, std::span<DistrictIndex> plan) {
  const std::size_t n = plan.size();
  if (!adjacency.valid_for(n) || k == 0 || k > kNoDistrict) return false;
  std::vector<std::uint16_t> probabilities;
  std::vector<std::uint32_t> tree, position;
  const UnitAdjacency lower = lower_part(adjacency);
  const std::size_t degree = lower.view().max_degree();
  std::vector<DistrictIndex> candidate(degree);
  std::vector<std::uint32_t> candidate_count(degree);
  RangeDecoder io(bytes);
  GraphModel model{n, k, lower.view(), probabilities, tree, position, candidate, candidate_count};
  return model.run<false>(io, plan) && io.finished_exactly();
}

}  // namespace planmill::codec
