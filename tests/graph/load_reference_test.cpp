// The loaded graph against networkx 2.8 (Debian python3-networkx, run with /usr/bin/python3):
// the same CSV files read by networkx give the same edge count, degrees, shared boundary sums
// and connectedness. Duplicates (in either order, with other lengths) and quoted ids are in the
// files on purpose.
#include <gtest/gtest.h>

#include <cstdio>
#include <map>
#include <sstream>

#include "../io/temp_files.hpp"
#include "planmill/base/random.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/io/csv.hpp"

namespace planmill {
namespace {

constexpr const char* kScript = R"(
import csv, sys
import networkx as nx
units_path, adjacency_path = sys.argv[1], sys.argv[2]
g = nx.Graph()
with open(units_path, newline='') as f:
    for row in csv.DictReader(f):
        g.add_node(row['unit'])
with open(adjacency_path, newline='') as f:
    rows = csv.reader(f)
    next(rows)
    for a, b, length in rows:
        if not g.has_edge(a, b):          # keep the first length, as planmill documents
            g.add_edge(a, b, length=float(length))
print('edges', g.number_of_edges())
print('connected', int(nx.is_connected(g)))
for u in g.nodes:
    print(repr(u), g.degree(u), repr(sum(d['length'] for _, _, d in g.edges(u, data=True))))
)";

std::string run(const std::string& command) {
  std::string out;
  FILE* pipe = ::popen(command.c_str(), "r");
  if (!pipe) return out;
  char buffer[4096];
  while (std::size_t n = std::fread(buffer, 1, sizeof buffer, pipe)) out.append(buffer, n);
  ::pclose(pipe);
  return out;
}

TEST(LoadReference, MatchesNetworkx) {
  test::TempDir dir;
  Rng rng = make_stream(11, 0);
  constexpr std::uint32_t n = 60;
  auto id = [](std::uint32_t u) { return u % 7 == 0 ? "u," + std::to_string(u) : "u" + std::to_string(u); };
  std::string units = "unit,pop\n";
  for (std::uint32_t u = 0; u < n; ++u) units += csv_field(id(u)) + "," + std::to_string(1 + u % 9) + "\n";
  std::string adjacency = "a,b,len\n";
  auto add = [&](std::uint32_t a, std::uint32_t b) {
    const double length = 0.25 * (1 + uniform_below(rng, 40));
    adjacency += csv_field(id(a)) + "," + csv_field(id(b)) + "," + std::to_string(length) + "\n";
  };
  for (std::uint32_t u = 0; u + 1 < n; ++u) add(u, u + 1);
  for (int extra = 0; extra < 150; ++extra) {
    const std::uint32_t a = uniform_below(rng, n), b = uniform_below(rng, n);
    if (a == b) continue;
    add(a, b);
    if (extra % 5 == 0) add(b, a);  // the same edge again, reversed
  }
  MapSpec spec;
  spec.units_path = dir.write("units.csv", units);
  spec.adjacency_path = dir.write("adjacency.csv", adjacency);
  spec.id_column = "unit";
  spec.population_column = "pop";
  LoadReport report;
  const UnitGraph g = load_unit_graph(spec, &report);
  EXPECT_GT(report.duplicate_edges_merged, 0U);

  const std::string script = dir.write("reference.py", kScript);
  std::istringstream out(run("/usr/bin/python3 " + script + " " + spec.units_path + " " + spec.adjacency_path));
  std::string word;
  std::size_t edges = 0;
  int connected = -1;
  out >> word >> edges >> word >> connected;
  ASSERT_EQ(word, "connected") << "networkx reference did not run";
  EXPECT_EQ(g.edge_count(), edges);
  EXPECT_EQ(connected, 1);
  std::string line;
  std::getline(out, line);
  std::size_t checked = 0;
  while (std::getline(out, line)) {
    // repr('u,7') 3 12.5 -> id between quotes, then degree and shared length sum.
    const std::size_t close = line.find('\'', 1);
    const std::string unit = line.substr(1, close - 1);
    std::istringstream rest(line.substr(close + 1));
    std::size_t degree = 0;
    double shared = 0;
    rest >> degree >> shared;
    const auto u = g.find_unit(unit);
    ASSERT_TRUE(u) << unit;
    EXPECT_EQ(g.degree(*u), degree) << unit;
    double sum = 0;
    for (EdgeIndex e : g.incident_edges(*u)) sum += g.edge_length(e);
    EXPECT_NEAR(sum, shared, 1e-9 * (1 + shared)) << unit;
    ++checked;
  }
  EXPECT_EQ(checked, n);
}

}  // namespace
}  // namespace planmill
