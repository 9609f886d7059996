#include "planmill/graph/unit_graph.hpp"

#include <algorithm>
#include <numeric>
#include <stdexcept>

namespace planmill {

std::optional<UnitIndex> UnitGraph::find_unit(std::string_view id) const {
  auto it = index_of_.find(std::string(id));
  if (it == index_of_.end()) return std::nullopt;
  return it->second;
}

std::optional<std::size_t> UnitGraph::find_count_column(std::string_view name) const {
  for (std::size_t c = 0; c < count_names_.size(); ++c)
    if (count_names_[c] == name) return c;
  return std::nullopt;
}

UnitGraph UnitGraph::with_counts_permuted(std::span<const std::size_t> columns,
                                          std::span<const UnitIndex> source) const {
  const std::size_t n = unit_count();
  std::vector<bool> seen(n, false);
  if (source.size() != n) throw std::invalid_argument("the permutation is not of the map's units");
  for (const UnitIndex u : source) {
    if (u >= n || seen[u]) throw std::invalid_argument("the permutation is not of the map's units");
    seen[u] = true;
  }
  UnitGraph g;
  g.ids_ = ids_;
  g.index_of_ = index_of_;
  g.population_ = population_;
  g.total_population_ = total_population_;
  g.count_names_ = count_names_;
  g.counts_ = counts_;
  g.groups_ = groups_;
  g.elections_ = elections_;
  g.counties_ = counties_;
  g.municipalities_ = municipalities_;
  g.area_ = area_;
  g.perimeter_ = perimeter_;
  g.outer_boundary_ = outer_boundary_;
  g.offsets_ = offsets_;
  g.adjacency_ = adjacency_;
  g.incident_ = incident_;
  g.edge_ends_ = edge_ends_;
  g.edge_length_ = edge_length_;
  for (const std::size_t c : columns) {
    if (c >= count_names_.size()) throw std::invalid_argument("no such count column");
    const auto from = count_column(c);
    double* to = g.counts_.data() + c * n;
    for (std::size_t u = 0; u < n; ++u) to[u] = from[source[u]];
  }
  return g;
}

UnitGraph::Components UnitGraph::components() const {
  const std::size_t n = unit_count();
  constexpr auto kUnseen = static_cast<std::uint32_t>(-1);
  Components result;
  result.of_unit.assign(n, kUnseen);
  std::vector<UnitIndex> stack;
  for (UnitIndex start = 0; start < n; ++start) {
    if (result.of_unit[start] != kUnseen) continue;
    const auto label = static_cast<std::uint32_t>(result.sizes.size());
    std::size_t size = 0;
    stack.push_back(start);
    result.of_unit[start] = label;
    while (!stack.empty()) {
      const UnitIndex u = stack.back();
      stack.pop_back();
      ++size;
      for (UnitIndex v : neighbors(u))
        if (result.of_unit[v] == kUnseen) {
          result.of_unit[v] = label;
          stack.push_back(v);
        }
    }
    result.sizes.push_back(size);
  }
  // Relabel so that component 0 is the largest.
  std::vector<std::uint32_t> order(result.sizes.size());
  std::iota(order.begin(), order.end(), 0U);
  std::stable_sort(order.begin(), order.end(),
                   [&](auto a, auto b) { return result.sizes[a] > result.sizes[b]; });
  std::vector<std::uint32_t> rank(order.size());
  std::vector<std::size_t> sizes(order.size());
  for (std::uint32_t r = 0; r < order.size(); ++r) {
    rank[order[r]] = r;
    sizes[r] = result.sizes[order[r]];
  }
  for (auto& c : result.of_unit) c = rank[c];
  result.sizes = std::move(sizes);
  return result;
}

std::optional<UnitIndex> UnitGraphBuilder::add_unit(std::string id, std::int64_t population) {
  const auto index = static_cast<UnitIndex>(graph_.ids_.size());
  if (!graph_.index_of_.emplace(id, index).second) return std::nullopt;
  graph_.ids_.push_back(std::move(id));
  graph_.population_.push_back(population);
  graph_.total_population_ += population;
  return index;
}

void UnitGraphBuilder::add_count_column(std::string name, std::vector<double> values) {
  graph_.count_names_.push_back(std::move(name));
  graph_.counts_.insert(graph_.counts_.end(), values.begin(), values.end());
}
void UnitGraphBuilder::set_groups(std::vector<std::size_t> columns) { graph_.groups_ = std::move(columns); }
void UnitGraphBuilder::add_election(Election election) { graph_.elections_.push_back(std::move(election)); }
void UnitGraphBuilder::set_counties(UnitCodes codes) { graph_.counties_ = std::move(codes); }
void UnitGraphBuilder::set_municipalities(UnitCodes codes) { graph_.municipalities_ = std::move(codes); }
void UnitGraphBuilder::set_areas(std::vector<double> values) { graph_.area_ = std::move(values); }
void UnitGraphBuilder::set_perimeters(std::vector<double> values) { graph_.perimeter_ = std::move(values); }
void UnitGraphBuilder::set_outer_boundary(std::vector<double> values) {
  graph_.outer_boundary_ = std::move(values);
}

UnitGraphBuilder::EdgeResult UnitGraphBuilder::add_edge(UnitIndex a, UnitIndex b, double length) {
  if (a == b) return EdgeResult::self_loop;
  if (a > b) std::swap(a, b);
  const std::uint64_t key = (static_cast<std::uint64_t>(a) << 32) | b;
  auto [it, inserted] = edge_slot_.emplace(key, edges_.size());
  if (!inserted) {
    if (lengths_[it->second] < 0 && length >= 0) {
      lengths_[it->second] = length;
      any_length_ = true;
    }
    return EdgeResult::duplicate_merged;
  }
  edges_.emplace_back(a, b);
  lengths_.push_back(length);
  if (length >= 0) any_length_ = true;
  return EdgeResult::added;
}

UnitGraph UnitGraphBuilder::build() && {
  UnitGraph& g = graph_;
  const std::size_t n = g.ids_.size();
  // Edges in (first, second) order give reproducible edge indices whatever the file order.
  std::vector<std::size_t> order(edges_.size());
  std::iota(order.begin(), order.end(), std::size_t{0});
  std::sort(order.begin(), order.end(), [&](auto x, auto y) { return edges_[x] < edges_[y]; });
  g.edge_ends_.resize(2 * edges_.size());
  if (any_length_) g.edge_length_.resize(edges_.size());
  std::vector<std::size_t> degree(n, 0);
  for (std::size_t e = 0; e < order.size(); ++e) {
    const auto [a, b] = edges_[order[e]];
    g.edge_ends_[2 * e] = a;
    g.edge_ends_[2 * e + 1] = b;
    if (any_length_) g.edge_length_[e] = std::max(0.0, lengths_[order[e]]);
    ++degree[a];
    ++degree[b];
  }
  g.offsets_.assign(n + 1, 0);
  for (std::size_t u = 0; u < n; ++u) g.offsets_[u + 1] = g.offsets_[u] + degree[u];
  g.adjacency_.resize(g.offsets_[n]);
  g.incident_.resize(g.offsets_[n]);
  std::vector<std::size_t> fill(g.offsets_.begin(), g.offsets_.end() - 1);
  // Edges are sorted by (first, second), so each neighbourhood comes out sorted by neighbour.
  for (std::size_t e = 0; e < order.size(); ++e) {
    const UnitIndex a = g.edge_ends_[2 * e], b = g.edge_ends_[2 * e + 1];
    g.adjacency_[fill[a]] = b;
    g.incident_[fill[a]++] = static_cast<EdgeIndex>(e);
  }
  for (std::size_t e = 0; e < order.size(); ++e) {
    const UnitIndex a = g.edge_ends_[2 * e], b = g.edge_ends_[2 * e + 1];
    g.adjacency_[fill[b]] = a;
    g.incident_[fill[b]++] = static_cast<EdgeIndex>(e);
  }
  for (std::size_t u = 0; u < n; ++u) {
    // Merge the two sorted runs (lower neighbours were appended in the second pass).
    std::vector<std::pair<UnitIndex, EdgeIndex>> nb;
    nb.reserve(degree[u]);
    for (std::size_t i = g.offsets_[u]; i < g.offsets_[u + 1]; ++i) nb.emplace_back(g.adjacency_[i], g.incident_[i]);
    std::sort(nb.begin(), nb.end());
    for (std::size_t i = 0; i < nb.size(); ++i) {
      g.adjacency_[g.offsets_[u] + i] = nb[i].first;
      g.incident_[g.offsets_[u] + i] = nb[i].second;
    }
  }
  if (g.outer_boundary_.empty() && !g.perimeter_.empty() && any_length_) {
    g.outer_boundary_.assign(n, 0.0);
    for (UnitIndex u = 0; u < n; ++u) {
      double shared = 0.0;
      for (EdgeIndex e : g.incident_edges(u)) shared += g.edge_length_[e];
      g.outer_boundary_[u] = std::max(0.0, g.perimeter_[u] - shared);
    }
  }
  return std::move(graph_);
}

}  // namespace planmill
