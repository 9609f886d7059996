// Graph records: the decoder and the adjacency it needs; see graph_record.hpp and docs/format.md.
#include "store/graph_record.hpp"

#include <algorithm>

#include "store/graph_model.hpp"
#include "store/range_coder.hpp"

namespace planmill::codec {

// The neighbours v < u of every unit u, the ones already coded when u is.
UnitAdjacency lower_part(const UnitAdjacency& adjacency) {
  UnitAdjacency lower;
  lower.offsets.reserve(adjacency.offsets.size());
  lower.offsets.push_back(0);
  for (std::size_t u = 0; u + 1 < adjacency.offsets.size(); ++u) {
    for (std::uint64_t e = adjacency.offsets[u]; e < adjacency.offsets[u + 1]; ++e)
      if (adjacency.neighbors[e] < u) lower.neighbors.push_back(adjacency.neighbors[e]);
    lower.offsets.push_back(lower.neighbors.size());
  }
  return lower;
}

std::size_t max_degree(const UnitAdjacency& adjacency) {
  std::size_t most = 0;
  for (std::size_t u = 0; u + 1 < adjacency.offsets.size(); ++u)
    most = std::max<std::size_t>(most, adjacency.offsets[u + 1] - adjacency.offsets[u]);
  return most;
}

bool decode_graph_record(std::span<const std::uint8_t> bytes, std::size_t k,
                         const UnitAdjacency* adjacency, std::span<DistrictIndex> plan) {
  const std::size_t n = plan.size();
  if (!adjacency || !adjacency->valid_for(n) || k == 0 || k > kNoDistrict) return false;
  std::vector<std::uint16_t> probabilities;
  std::vector<std::uint32_t> tree, position;
  const UnitAdjacency lower = lower_part(*adjacency);
  const std::size_t degree = max_degree(lower);
  std::vector<DistrictIndex> candidate(degree);
  std::vector<std::uint32_t> candidate_count(degree);
  RangeDecoder io(bytes);
  GraphModel model{n, k, lower, probabilities, tree, position, candidate, candidate_count};
  return model.run<false>(io, plan) && io.finished_exactly();
}

}  // namespace planmill::codec
