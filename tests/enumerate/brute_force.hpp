#pragma once
// Independent brute force for the enumerator: try every labelling of the units with k labels,
// keep those using all k labels, each label connected and within the population bounds, and
// return them relabelled canonically (labels in order of first appearance). Only for graphs of
// about a dozen units.
#include <cstdint>
#include <set>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/graph/unit_graph.hpp"

namespace planmill::test {

inline std::vector<DistrictIndex> canonical(const std::vector<DistrictIndex>& labels,
                                            std::size_t k) {
  std::vector<DistrictIndex> rename(k, kNoDistrict), out(labels.size());
  DistrictIndex next = 0;
  for (std::size_t u = 0; u < labels.size(); ++u) {
    if (rename[labels[u]] == kNoDistrict) rename[labels[u]] = next++;
    out[u] = rename[labels[u]];
  }
  return out;
}

// Connectivity of label d by repeated relaxation over the edge list (deliberately unlike a BFS).
inline bool label_connected(const UnitGraph& g, const std::vector<DistrictIndex>& labels,
                            DistrictIndex d) {
  std::vector<char> reached(labels.size(), 0);
  std::size_t first = 0;
  while (labels[first] != d) ++first;
  reached[first] = 1;
  for (bool changed = true; changed;) {
    changed = false;
    for (EdgeIndex e = 0; e < g.edge_count(); ++e) {
      const UnitIndex a = g.edge_first(e), b = g.edge_second(e);
      if (labels[a] != d || labels[b] != d || reached[a] == reached[b]) continue;
      reached[a] = reached[b] = 1;
      changed = true;
    }
  }
  for (std::size_t u = 0; u < labels.size(); ++u)
    if (labels[u] == d && !reached[u]) return false;
  return true;
}

inline std::set<std::vector<DistrictIndex>> brute_force_plans(const UnitGraph& g, std::size_t k,
                                                             std::int64_t pop_min,
                                                             std::int64_t pop_max) {
  const std::size_t n = g.unit_count();
  std::set<std::vector<DistrictIndex>> plans;
  std::vector<DistrictIndex> labels(n, 0);
  while (true) {
    std::vector<std::int64_t> pop(k, 0);
    std::vector<std::size_t> size(k, 0);
    for (std::size_t u = 0; u < n; ++u) {
      pop[labels[u]] += g.population(static_cast<UnitIndex>(u));
      ++size[labels[u]];
    }
    bool ok = true;
    for (DistrictIndex d = 0; d < k && ok; ++d)
      ok = size[d] > 0 && pop[d] >= pop_min && pop[d] <= pop_max && label_connected(g, labels, d);
    if (ok) plans.insert(canonical(labels, k));
    // Next labelling, as an odometer in base k.
    std::size_t i = 0;
    while (i < n && ++labels[i] == k) labels[i++] = 0;
    if (i == n) break;
  }
  return plans;
}

}  // namespace planmill::test
