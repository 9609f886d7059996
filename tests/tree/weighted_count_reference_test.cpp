// The weighted matrix-tree count against networkx and numpy (Debian python3-networkx 2.8.8,
// python3-numpy, run with /usr/bin/python3): networkx.to_numpy_array(G, weight="weight") gives the
// weighted adjacency, L = diag(row sums) - A the weighted Laplacian, and numpy.linalg.slogdet the
// log-determinant of its minor without the first node. (networkx 2.8 has no
// number_of_spanning_trees, that came later, and its laplacian_matrix needs scipy.) The regions are
// random planar grids with random counties and municipalities, so the weights are ours to choose
// but the counting is theirs.
#include <gtest/gtest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <unistd.h>
#include <vector>

#include "command_output.hpp"
#include "planmill/base/random.hpp"
#include "planmill/tree/region.hpp"
#include "planmill/tree/tree_count.hpp"
#include "random_regions.hpp"
#include "run_jobs.hpp"

namespace planmill::test {
namespace {

constexpr const char* kScript = R"PY(
import sys
import networkx as nx
import numpy as np
g = nx.Graph()
with open(sys.argv[1]) as f:
    n = int(f.readline())
    g.add_nodes_from(range(n))
    for line in f:
        a, b, w = line.split()
        g.add_edge(int(a), int(b), weight=float(w))
adjacency = nx.to_numpy_array(g, nodelist=range(n), weight="weight")
laplacian = np.diag(adjacency.sum(axis=1)) - adjacency
sign, logdet = np.linalg.slogdet(laplacian[1:, 1:])
print(repr(float(logdet)) if sign > 0 else "-inf")
)PY";

TEST(WeightedTreeCountReference, MatchesNetworkxLaplacianDeterminants) {
  const std::filesystem::path dir = scratch_dir("planmill_tree_reference", "weighted");
  const std::filesystem::path script = dir / "count.py";
  std::ofstream(script) << kScript;
  Rng rng = make_stream(91, 0);
  TreeCounter counter;
  for (int round = 0; round < 12; ++round) {
    const std::uint32_t side = 4 + static_cast<std::uint32_t>(round % 5);
    const UnitGraph shape = planar_grid(side, side + 1, 0.3, rng);
    GraphExtras x;
    for (UnitIndex u = 0; u < shape.unit_count(); ++u) {
      x.county.push_back(uniform_below(rng, 3));
      x.municipality.push_back(uniform_below(rng, 4) == 0 ? UnitCodes::kNone : uniform_below(rng, 3));
    }
    EdgeList edges;
    for (EdgeIndex e = 0; e < shape.edge_count(); ++e) edges.emplace_back(shape.edge_first(e), shape.edge_second(e));
    const UnitGraph graph = build_graph(static_cast<std::uint32_t>(shape.unit_count()), edges, x);
    const TreeWeights weights{1.5 + round, round % 2 == 0 ? 1.0 : 2.0 + 0.5 * round};
    Region region;
    region.set_weights(weights);
    region.build(graph, connected_region(graph, 0.2, rng));
    std::ostringstream text;
    text.precision(17);
    text << region.size() << "\n";
    for (std::uint32_t u = 0; u < region.size(); ++u)
      for (const std::uint32_t w : region.neighbors(u))
        if (u < w) text << u << " " << w << " " << weights.weight(graph, region.global(u), region.global(w)) << "\n";
    const std::filesystem::path input = dir / ("graph" + std::to_string(round) + ".txt");
    std::ofstream(input) << text.str();
    const std::string out = command_output("/usr/bin/python3 " + script.string() + " " + input.string() + " 2>&1");
    double expected = 0;
    ASSERT_TRUE(std::istringstream(out) >> expected) << out;
    const double ours = counter.log_count(region);
    EXPECT_NEAR(ours, expected, 1e-9 * std::max(1.0, std::abs(expected))) << "round " << round << ", "
                                                                            << region.size() << " vertices";
  }
}

}  // namespace
}  // namespace planmill::test
