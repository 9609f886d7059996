#pragma once
// UnitGraph: the map as planmill sees it. Units with their attributes, and an undirected simple
// graph of adjacency stored as CSR and walked through AdjacencyView. Immutable once built; built
// only by UnitGraphBuilder, which validates, merges duplicate edges and sorts neighbourhoods.
#include <cstdint>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <unordered_map>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/graph/adjacency.hpp"

namespace planmill {

// A contest: one count column of votes per party, in the order given by the job file.
struct Election {
  std::string name;
  std::vector<std::string> parties;
  std::vector<std::size_t> columns;  // indices into the graph's count columns
};

// A categorical code per unit (county, municipality): dense codes 0..names.size()-1, or kNone
// for a unit in no municipality (counties always have a code).
struct UnitCodes {
  static constexpr std::uint32_t kNone = 0xFFFFFFFFU;
  std::vector<std::uint32_t> code;  // per unit
  std::vector<std::string> names;   // per code, as written in the unit table
};

class UnitGraph {
 public:
  UnitGraph() = default;
  UnitGraph(UnitGraph&&) noexcept = default;
  UnitGraph& operator=(UnitGraph&&) noexcept = default;
  UnitGraph(const UnitGraph&) = delete;
  UnitGraph& operator=(const UnitGraph&) = delete;

  [[nodiscard]] std::size_t unit_count() const noexcept { return ids_.size(); }
  [[nodiscard]] std::size_t edge_count() const noexcept { return edge_ends_.size() / 2; }

  // The adjacency, with the undirected edge behind each neighbour entry (edge ids).
  [[nodiscard]] AdjacencyView adjacency() const noexcept {
    return {offsets_, adjacency_, incident_};
  }
  // Shorthands for adjacency().neighbors(u), .incident_edges(u) and .degree(u).
  [[nodiscard]] std::span<const UnitIndex> neighbors(UnitIndex u) const noexcept {
    return adjacency().neighbors(u);
  }
  [[nodiscard]] std::span<const EdgeIndex> incident_edges(UnitIndex u) const noexcept {
    return adjacency().incident_edges(u);
  }
  [[nodiscard]] std::size_t degree(UnitIndex u) const noexcept { return adjacency().degree(u); }
  // Ends of edge e, first < second.
  [[nodiscard]] UnitIndex edge_first(EdgeIndex e) const noexcept { return edge_ends_[2 * e]; }
  [[nodiscard]] UnitIndex edge_second(EdgeIndex e) const noexcept { return edge_ends_[2 * e + 1]; }

  [[nodiscard]] bool has_edge_lengths() const noexcept { return !edge_length_.empty(); }
  [[nodiscard]] double edge_length(EdgeIndex e) const noexcept { return edge_length_[e]; }

  [[nodiscard]] const std::string& unit_id(UnitIndex u) const noexcept { return ids_[u]; }
  [[nodiscard]] std::optional<UnitIndex> find_unit(std::string_view id) const;

  [[nodiscard]] std::int64_t population(UnitIndex u) const noexcept { return population_[u]; }
  [[nodiscard]] std::span<const std::int64_t> populations() const noexcept { return population_; }
  [[nodiscard]] std::int64_t total_population() const noexcept { return total_population_; }

  [[nodiscard]] std::size_t count_column_count() const noexcept { return count_names_.size(); }
  [[nodiscard]] const std::string& count_column_name(std::size_t c) const { return count_names_[c]; }
  [[nodiscard]] std::span<const double> count_column(std::size_t c) const noexcept {
    return {counts_.data() + c * unit_count(), unit_count()};
  }
  [[nodiscard]] std::optional<std::size_t> find_count_column(std::string_view name) const;
  [[nodiscard]] const std::vector<std::size_t>& group_columns() const noexcept { return groups_; }
  [[nodiscard]] const std::vector<Election>& elections() const noexcept { return elections_; }

  [[nodiscard]] bool has_counties() const noexcept { return !counties_.code.empty(); }
  [[nodiscard]] const UnitCodes& counties() const noexcept { return counties_; }
  [[nodiscard]] bool has_municipalities() const noexcept { return !municipalities_.code.empty(); }
  [[nodiscard]] const UnitCodes& municipalities() const noexcept { return municipalities_; }

  [[nodiscard]] bool has_areas() const noexcept { return !area_.empty(); }
  [[nodiscard]] double area(UnitIndex u) const noexcept { return area_[u]; }
  // Length of the unit's boundary on the outer edge of the map (not shared with another unit).
  [[nodiscard]] bool has_outer_boundary() const noexcept { return !outer_boundary_.empty(); }
  [[nodiscard]] double outer_boundary(UnitIndex u) const noexcept { return outer_boundary_[u]; }
  [[nodiscard]] bool has_perimeters() const noexcept { return !perimeter_.empty(); }
  [[nodiscard]] double perimeter(UnitIndex u) const noexcept { return perimeter_[u]; }

  // A copy of this map in which every count column named in `columns` takes, at unit u, the value
  // unit source[u] has here (source: a permutation of the units); everything else (ids, population,
  // counties, municipalities, shapes, edges and their ids) is the same, bit for bit. For the
  // blind check (run/blind_check.hpp). Throws std::invalid_argument unless source is a
  // permutation of 0..n-1 and every column exists.
  [[nodiscard]] UnitGraph with_counts_permuted(std::span<const std::size_t> columns,
                                               std::span<const UnitIndex> source) const;

  // Connected components: component index per unit, and their sizes (largest first).
  struct Components {
    std::vector<std::uint32_t> of_unit;
    std::vector<std::size_t> sizes;
  };
  [[nodiscard]] Components components() const;

 private:
  friend class UnitGraphBuilder;
  // with_counts_permuted() copies every member below: a new one belongs there too.
  std::vector<std::string> ids_;
  std::unordered_map<std::string, UnitIndex> index_of_;
  std::vector<std::int64_t> population_;
  std::int64_t total_population_ = 0;
  std::vector<std::string> count_names_;
  std::vector<double> counts_;  // column-major: column c at [c * n, (c + 1) * n)
  std::vector<std::size_t> groups_;
  std::vector<Election> elections_;
  UnitCodes counties_, municipalities_;
  std::vector<double> area_, perimeter_, outer_boundary_;
  std::vector<AdjacencyView::Offset> offsets_{0};
  std::vector<UnitIndex> adjacency_;
  std::vector<EdgeIndex> incident_;
  std::vector<UnitIndex> edge_ends_;
  std::vector<double> edge_length_;
};

// Collects units and edges, then builds the CSR graph. Validation of user input (ids, numbers)
// happens in the loaders, which know files and lines; the builder checks only structural facts
// and reports them through the result so loaders can word the message.
class UnitGraphBuilder {
 public:
  // Returns the new unit's index, or nullopt if the id is already taken.
  std::optional<UnitIndex> add_unit(std::string id, std::int64_t population);
  void add_count_column(std::string name, std::vector<double> values);  // values per unit
  void set_groups(std::vector<std::size_t> columns);
  void add_election(Election election);
  void set_counties(UnitCodes codes);
  void set_municipalities(UnitCodes codes);
  void set_areas(std::vector<double> values);
  void set_perimeters(std::vector<double> values);
  void set_outer_boundary(std::vector<double> values);

  enum class EdgeResult { added, duplicate_merged, self_loop };
  // length < 0 means "not given". Duplicates keep the first length seen.
  EdgeResult add_edge(UnitIndex a, UnitIndex b, double length = -1.0);

  [[nodiscard]] std::size_t unit_count() const noexcept { return graph_.ids_.size(); }
  [[nodiscard]] std::optional<UnitIndex> find_unit(std::string_view id) const {
    return graph_.find_unit(id);
  }

  // Builds the CSR arrays. If some edges have lengths and others do not, missing lengths are 0.
  // If perimeters and edge lengths are known but outer boundaries are not, outer boundary =
  // max(0, perimeter - sum of shared lengths).
  [[nodiscard]] UnitGraph build() &&;

 private:
  UnitGraph graph_;
  std::vector<std::pair<UnitIndex, UnitIndex>> edges_;
  std::vector<double> lengths_;
  std::unordered_map<std::uint64_t, std::size_t> edge_slot_;
  bool any_length_ = false;
};

// The map shared by everything drawn on it. Plans and chain setups hold one, so a map lives as long
// as any plan of it, and moving whatever built the map cannot leave a plan pointing at freed memory.
using GraphHandle = std::shared_ptr<const UnitGraph>;
[[nodiscard]] inline GraphHandle share_graph(UnitGraph&& graph) {
  return std::make_shared<const UnitGraph>(std::move(graph));
}

}  // namespace planmill
