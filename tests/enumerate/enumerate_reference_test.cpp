// The enumerator against networkx (Debian python3-networkx, run with /usr/bin/python3): Python
// lists every set partition of the units into k blocks and keeps those whose blocks are
// connected (networkx.is_connected on the induced subgraph) and within the population bounds.
// Some graphs are networkx's own named and random graphs, so the input is outside us too.
#include <gtest/gtest.h>

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include <unistd.h>

#include "planmill/enumerate/enumerate.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

constexpr const char* kPartitionScript = R"PY(
import sys
import networkx as nx

with open(sys.argv[1]) as f:
    n, k, lo, hi = map(int, f.readline().split())
    pop = list(map(int, f.readline().split()))
    g = nx.Graph()
    g.add_nodes_from(range(n))
    for line in f:
        if line.strip():
            a, b = map(int, line.split())
            g.add_edge(a, b)

label = [0] * n
block_pop = [0] * k
out = []

def blocks_ok(used):
    for d in range(used):
        members = [u for u in range(n) if label[u] == d]
        if not lo <= block_pop[d] <= hi or not nx.is_connected(g.subgraph(members)):
            return False
    return True

# Restricted growth strings: unit u joins an existing block or opens the next one.
def place(u, used):
    if n - u < k - used:
        return
    if u == n:
        if used == k and blocks_ok(used):
            out.append(" ".join(map(str, label)))
        return
    for d in range(min(used + 1, k)):
        if block_pop[d] + pop[u] > hi:
            continue
        label[u] = d
        block_pop[d] += pop[u]
        place(u + 1, max(used, d + 1))
        block_pop[d] -= pop[u]

place(0, 0)
print(len(out))
for line in out:
    print(line)
)PY";

constexpr const char* kNamedGraphScript = R"PY(
import sys
import networkx as nx

name = sys.argv[1]
if name == "kite":
    g = nx.krackhardt_kite_graph()
elif name == "frucht":
    g = nx.frucht_graph()
elif name == "house_x":
    g = nx.house_x_graph()
else:
    seed = int(name.split(":")[1])
    g = nx.gnp_random_graph(10, 0.3, seed=seed)
g = nx.convert_node_labels_to_integers(g)
print(g.number_of_nodes())
for a, b in g.edges():
    print(a, b)
)PY";

std::filesystem::path write_temp(const std::string& name, const std::string& text) {
  const auto path = std::filesystem::temp_directory_path() /
                    ("planmill_enumerate_" + std::to_string(::getpid()) + "_" + name);
  std::ofstream(path) << text;
  return path;
}

// Runs /usr/bin/python3 on a script with arguments; returns stdout, fails the test on error.
std::string run_python(const char* script, const std::string& args) {
  const auto script_path = write_temp("script.py", script);
  const std::string command = "/usr/bin/python3 " + script_path.string() + " " + args;
  std::string out;
  if (FILE* pipe = ::popen(command.c_str(), "r")) {
    char buf[4096];
    std::size_t got = 0;
    while ((got = std::fread(buf, 1, sizeof buf, pipe)) > 0) out.append(buf, got);
    const int status = ::pclose(pipe);
    EXPECT_EQ(status, 0) << command << " failed; is python3-networkx installed?";
  } else {
    ADD_FAILURE() << "cannot run " << command;
  }
  std::filesystem::remove(script_path);
  return out;
}

struct NamedGraph {
  std::uint32_t n = 0;
  test::EdgeList edges;
};

NamedGraph networkx_graph(const std::string& name) {
  std::istringstream in(run_python(kNamedGraphScript, name));
  NamedGraph g;
  in >> g.n;
  UnitIndex a = 0, b = 0;
  while (in >> a >> b) g.edges.emplace_back(a, b);
  return g;
}

std::set<std::vector<DistrictIndex>> networkx_plans(const UnitGraph& g, const test::EdgeList& edges,
                                                    std::size_t k, std::int64_t lo,
                                                    std::int64_t hi) {
  std::ostringstream text;
  text << g.unit_count() << ' ' << k << ' ' << lo << ' ' << hi << '\n';
  for (UnitIndex u = 0; u < g.unit_count(); ++u) text << g.population(u) << ' ';
  text << '\n';
  for (const auto& [a, b] : edges) text << a << ' ' << b << '\n';
  const auto input = write_temp("graph.txt", text.str());
  std::istringstream out(run_python(kPartitionScript, input.string()));
  std::filesystem::remove(input);
  std::size_t count = 0;
  out >> count;
  std::set<std::vector<DistrictIndex>> plans;
  for (std::size_t i = 0; i < count; ++i) {
    std::vector<DistrictIndex> labels(g.unit_count());
    for (auto& d : labels) out >> d;
    plans.insert(labels);
  }
  EXPECT_EQ(plans.size(), count);
  return plans;
}

std::set<std::vector<DistrictIndex>> our_plans(const UnitGraph& g, std::size_t k, std::int64_t lo,
                                               std::int64_t hi) {
  std::set<std::vector<DistrictIndex>> plans;
  for_each_plan(g, k, lo, hi,
                [&](std::span<const DistrictIndex> a) { plans.emplace(a.begin(), a.end()); });
  return plans;
}

struct Case {
  std::string name;
  std::uint32_t n;
  test::EdgeList edges;
  std::vector<std::int64_t> population;
  std::size_t k;
  std::int64_t lo, hi;
};

void check(const Case& c) {
  SCOPED_TRACE(c.name);
  const UnitGraph g = test::graph_from_edges(c.n, c.edges, c.population);
  const auto want = networkx_plans(g, c.edges, c.k, c.lo, c.hi);
  EXPECT_FALSE(want.empty());  // every case has plans, so agreement means something
  EXPECT_EQ(our_plans(g, c.k, c.lo, c.hi), want);
}

TEST(EnumerateReference, OurIrregularGraphsMatchNetworkx) {
  check({"two squares and a tail", 9, test::two_squares_tail_edges(), {2, 7, 1, 8, 2, 8, 1, 8, 2},
         3, 8, 16});
  check({"triangle-square-pendant", 7, test::triangle_square_pendant_edges(), {}, 3, 1, 4});
  check({"wheel 8", 9, test::wheel_edges(8), {}, 3, 3, 3});
  check({"3x4 grid", 12, test::grid_edges(3, 4), {1, 2, 3, 1, 2, 3, 1, 2, 3, 1, 2, 3}, 3, 7, 9});
}

TEST(EnumerateReference, NetworkxGraphsMatchNetworkx) {
  std::size_t cases_with_plans = 0, plans_seen = 0;
  for (const std::string name : {"kite", "house_x", "frucht", "gnp:3", "gnp:11", "gnp:20"}) {
    const NamedGraph ng = networkx_graph(name);
    ASSERT_GT(ng.n, 0U) << name;
    std::vector<std::int64_t> pop(ng.n);
    for (std::uint32_t u = 0; u < ng.n; ++u) pop[u] = 1 + (u * 7) % 4;  // 1..4, irregular
    std::int64_t total = 0;
    for (auto p : pop) total += p;
    for (std::size_t k : {2, 3}) {
      const std::int64_t ideal = total / static_cast<std::int64_t>(k);
      Case c{name + " k=" + std::to_string(k), ng.n, ng.edges, pop, k, ideal - 3, ideal + 3};
      // Random graphs may be disconnected; a case without plans still has to agree.
      const UnitGraph g = test::graph_from_edges(c.n, c.edges, c.population);
      SCOPED_TRACE(c.name);
      const auto want = networkx_plans(g, c.edges, c.k, c.lo, c.hi);
      EXPECT_EQ(our_plans(g, c.k, c.lo, c.hi), want);
      cases_with_plans += want.empty() ? 0 : 1;
      plans_seen += want.size();
    }
  }
  EXPECT_GE(cases_with_plans, 9U) << plans_seen << " plans in all";
  std::printf("%zu of 12 cases have plans, %zu plans in all\n", cases_with_plans, plans_seen);
}

}  // namespace
}  // namespace planmill
