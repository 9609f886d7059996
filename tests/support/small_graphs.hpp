#pragma once
// Small graphs for everybody's tests, built through UnitGraphBuilder. Unit ids are "0", "1", ...
// and unit indices follow them. Grids number unit (r, c) as r * cols + c.
//
//   auto g = planmill::test::grid(4, 4);                       // 16 units of population 1
//   planmill::test::GraphExtras x;
//   x.county = planmill::test::block_codes(4, 4, 2, 2);        // four 2x2 counties
//   x.counts.push_back({"group", std::vector<double>(16, 0.5)});
//   auto h = planmill::test::grid(4, 4, x);
#include <algorithm>
#include <cstdint>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/graph/unit_graph.hpp"

namespace planmill::test {

using EdgeList = std::vector<std::pair<UnitIndex, UnitIndex>>;

// Optional unit attributes. Empty vectors mean "not given" (population then defaults to 1).
struct GraphExtras {
  std::vector<std::int64_t> population;
  std::vector<std::uint32_t> county;  // dense codes; county names become "c0", "c1", ...
  std::vector<std::pair<std::string, std::vector<double>>> counts;  // count columns, in order
  std::vector<std::size_t> groups;    // indices of count columns that are groups
  std::vector<double> area;
  // Municipality codes (UnitCodes::kNone: in none; names "m0", "m1", ...), outer boundary lengths,
  // and one shared boundary length per edge in the order the edges are given.
  std::vector<std::uint32_t> municipality;
  std::vector<double> outer_boundary;
  std::vector<double> edge_length;
};

// Names "<prefix>0", "<prefix>1", ... for dense codes (kNone skipped).
inline UnitCodes named_codes(const std::vector<std::uint32_t>& code, const std::string& prefix) {
  UnitCodes codes;
  codes.code = code;
  std::uint32_t top = 0;
  for (std::uint32_t c : code)
    if (c != UnitCodes::kNone) top = std::max(top, c + 1);
  for (std::uint32_t c = 0; c < top; ++c) codes.names.push_back(prefix + std::to_string(c));
  return codes;
}

inline UnitGraph build_graph(std::uint32_t n, const EdgeList& edges, const GraphExtras& extras) {
  UnitGraphBuilder builder;
  for (std::uint32_t u = 0; u < n; ++u) {
    const std::int64_t pop = extras.population.empty() ? 1 : extras.population.at(u);
    if (!builder.add_unit(std::to_string(u), pop)) throw std::logic_error("duplicate unit id");
  }
  for (const auto& [name, values] : extras.counts) {
    if (values.size() != n) throw std::logic_error("count column " + name + " has the wrong size");
    builder.add_count_column(name, values);
  }
  if (!extras.groups.empty()) builder.set_groups(extras.groups);
  if (!extras.county.empty()) {
    if (extras.county.size() != n) throw std::logic_error("county codes have the wrong size");
    builder.set_counties(named_codes(extras.county, "c"));
  }
  if (!extras.municipality.empty()) {
    if (extras.municipality.size() != n) throw std::logic_error("municipality codes have the wrong size");
    builder.set_municipalities(named_codes(extras.municipality, "m"));
  }
  if (!extras.area.empty()) builder.set_areas(extras.area);
  if (!extras.outer_boundary.empty()) builder.set_outer_boundary(extras.outer_boundary);
  if (!extras.edge_length.empty() && extras.edge_length.size() != edges.size())
    throw std::logic_error("edge lengths have the wrong size");
  for (const auto& [a, b] : edges) {
    if (a >= n || b >= n) throw std::logic_error("edge end out of range");
  }
  for (std::size_t i = 0; i < edges.size(); ++i)
    (void)builder.add_edge(edges[i].first, edges[i].second,
                           extras.edge_length.empty() ? -1.0 : extras.edge_length[i]);
  return std::move(builder).build();
}

inline UnitGraph graph_from_edges(std::uint32_t n, const EdgeList& edges,
                                  const std::vector<std::int64_t>& population = {}) {
  GraphExtras extras;
  extras.population = population;
  return build_graph(n, edges, extras);
}

// rows x cols grid with rook adjacency (shared sides only).
inline EdgeList grid_edges(std::uint32_t rows, std::uint32_t cols) {
  EdgeList e;
  for (std::uint32_t r = 0; r < rows; ++r)
    for (std::uint32_t c = 0; c < cols; ++c) {
      const std::uint32_t u = r * cols + c;
      if (c + 1 < cols) e.emplace_back(u, u + 1);
      if (r + 1 < rows) e.emplace_back(u, u + cols);
    }
  return e;
}

inline UnitGraph grid(std::uint32_t rows, std::uint32_t cols, const GraphExtras& extras = {}) {
  return build_graph(rows * cols, grid_edges(rows, cols), extras);
}

inline EdgeList path_edges(std::uint32_t n) {
  EdgeList e;
  for (std::uint32_t a = 0; a + 1 < n; ++a) e.emplace_back(a, a + 1);
  return e;
}

inline EdgeList cycle_edges(std::uint32_t n) {
  EdgeList e;
  for (std::uint32_t a = 0; a < n; ++a) e.emplace_back(a, (a + 1) % n);
  return e;
}

inline EdgeList complete_edges(std::uint32_t n) {
  EdgeList e;
  for (std::uint32_t a = 0; a < n; ++a)
    for (std::uint32_t b = a + 1; b < n; ++b) e.emplace_back(a, b);
  return e;
}

// Parts {0..m-1} and {m..m+n-1}.
inline EdgeList complete_bipartite_edges(std::uint32_t m, std::uint32_t n) {
  EdgeList e;
  for (std::uint32_t a = 0; a < m; ++a)
    for (std::uint32_t b = 0; b < n; ++b) e.emplace_back(a, m + b);
  return e;
}

// Hub 0 joined to every unit of the cycle 1..n.
inline EdgeList wheel_edges(std::uint32_t n) {
  EdgeList e;
  for (std::uint32_t a = 1; a <= n; ++a) {
    e.emplace_back(0, a);
    e.emplace_back(a, a % n + 1);
  }
  return e;
}

// Outer 5-cycle 0..4, spokes i -- i+5, inner pentagram on 5..9.
inline EdgeList petersen_edges() {
  EdgeList e;
  for (std::uint32_t i = 0; i < 5; ++i) {
    e.emplace_back(i, (i + 1) % 5);
    e.emplace_back(i, i + 5);
    e.emplace_back(5 + i, 5 + (i + 2) % 5);
  }
  return e;
}

// Hypercube Q_d: units differing in one bit.
inline EdgeList hypercube_edges(std::uint32_t d) {
  EdgeList e;
  for (std::uint32_t u = 0; u < (1U << d); ++u)
    for (std::uint32_t bit = 0; bit < d; ++bit)
      if (!(u & (1U << bit))) e.emplace_back(u, u | (1U << bit));
  return e;
}

// Irregular, 7 units: triangle 0-1-2, a 4-cycle 2-3-4-5 with chord 2-4, and a pendant 6 on 4.
inline EdgeList triangle_square_pendant_edges() {
  return {{0, 1}, {1, 2}, {0, 2}, {2, 3}, {3, 4}, {4, 5}, {5, 2}, {2, 4}, {4, 6}};
}

// Irregular, 9 units, with a cut vertex (4) and a bridge (6-7): a "map" with an island-like tail.
//   0-1-2      two squares 0-1-4-3 and 1-2-5-4 sharing 1-4,
//   | | |      then 4-6 and 5-6 close a triangle, 6-7 a bridge, 7-8 a pendant.
//   3-4-5
//      \|
//       6-7-8
inline EdgeList two_squares_tail_edges() {
  return {{0, 1}, {1, 2}, {0, 3}, {1, 4}, {2, 5}, {3, 4}, {4, 5}, {4, 6}, {5, 6}, {6, 7}, {7, 8}};
}

// Codes for a rows x cols grid cut into blocks of block_rows x block_cols (the last blocks may
// be smaller), numbered row by row: useful as counties.
inline std::vector<std::uint32_t> block_codes(std::uint32_t rows, std::uint32_t cols,
                                              std::uint32_t block_rows, std::uint32_t block_cols) {
  const std::uint32_t blocks_per_row = (cols + block_cols - 1) / block_cols;
  std::vector<std::uint32_t> code(static_cast<std::size_t>(rows) * cols);
  for (std::uint32_t r = 0; r < rows; ++r)
    for (std::uint32_t c = 0; c < cols; ++c)
      code[r * cols + c] = (r / block_rows) * blocks_per_row + c / block_cols;
  return code;
}

// A plan of a rows x cols grid as `k` vertical stripes of near-equal width (k <= cols).
inline std::vector<DistrictIndex> stripe_assignment(std::uint32_t rows, std::uint32_t cols,
                                                    std::uint32_t k) {
  std::vector<DistrictIndex> d(static_cast<std::size_t>(rows) * cols);
  for (std::uint32_t r = 0; r < rows; ++r)
    for (std::uint32_t c = 0; c < cols; ++c)
      d[r * cols + c] = static_cast<DistrictIndex>(static_cast<std::uint64_t>(c) * k / cols);
  return d;
}

}  // namespace planmill::test
