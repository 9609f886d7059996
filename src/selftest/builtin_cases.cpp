#include <algorithm>
#include <string>

#include "planmill/selftest/selftest.hpp"

namespace planmill {
namespace {

// Units of population 1, except those listed in `empty` (population 0).
std::shared_ptr<const UnitGraph> grid(std::size_t width, std::size_t height, std::vector<std::size_t> empty = {}) {
  UnitGraphBuilder b;
  for (std::size_t i = 0; i < width * height; ++i)
    (void)b.add_unit("g" + std::to_string(i), std::find(empty.begin(), empty.end(), i) == empty.end() ? 1 : 0);
  for (std::size_t r = 0; r < height; ++r)
    for (std::size_t c = 0; c < width; ++c) {
      const auto u = static_cast<UnitIndex>(r * width + c);
      if (c + 1 < width) b.add_edge(u, u + 1);
      if (r + 1 < height) b.add_edge(u, static_cast<UnitIndex>(u + width));
    }
  return std::make_shared<const UnitGraph>(std::move(b).build());
}

// Eleven units of unequal population: a 3x3 block with one diagonal, a pendant pair and a
// triangle, two counties and three municipalities (two units in none), so that county splits,
// tree weights and unequal sizes matter.
std::shared_ptr<const UnitGraph> irregular() {
  UnitGraphBuilder b;
  const std::int64_t pop[] = {3, 1, 2, 2, 4, 1, 1, 2, 3, 2, 1};
  for (int i = 0; i < 11; ++i) (void)b.add_unit("r" + std::to_string(i), pop[i]);
  const std::pair<UnitIndex, UnitIndex> edges[] = {{0, 1}, {1, 2}, {3, 4}, {4, 5}, {6, 7}, {7, 8}, {0, 3}, {3, 6},
                                                   {1, 4}, {4, 7}, {2, 5}, {5, 8}, {0, 4}, {8, 9}, {9, 10}, {5, 10}};
  for (auto [u, v] : edges) b.add_edge(u, v);
  UnitCodes counties;
  counties.names = {"west", "east"};
  counties.code = {0, 0, 1, 0, 0, 1, 0, 1, 1, 1, 1};
  b.set_counties(counties);
  UnitCodes towns;
  towns.names = {"north", "south", "harbour"};
  constexpr std::uint32_t none = UnitCodes::kNone;
  towns.code = {0, 0, 1, 0, none, 1, 2, 2, 1, none, 1};
  b.set_municipalities(towns);
  return std::make_shared<const UnitGraph>(std::move(b).build());
}

SelftestCase make(std::string name, std::shared_ptr<const UnitGraph> graph, std::size_t k, double deviation,
                  KernelKind kind, double gamma, double beta, std::uint64_t thin) {
  SelftestCase c;
  c.name = std::move(name);
  c.graph = std::move(graph);
  c.districts = k;
  c.rules.population_tolerance = deviation;
  c.kernel.kind = kind;
  c.kernel.gamma = gamma;
  c.kernel.beta = beta;
  c.thin = thin;
  return c;
}

}  // namespace

std::vector<SelftestCase> builtin_selftest_cases(bool quick) {
  const auto g4 = grid(4, 4), g3x4 = grid(3, 4), odd = irregular();
  std::vector<SelftestCase> cases;
  // With exact population equality and positive populations a tree has at most one balanced edge
  // (two would leave a middle piece of population 0), so M = 1 is exact there.
  auto tree_law = make("4x4 grid into 4, spanning-tree law", g4, 4, 0.0, KernelKind::merge_split, 1.0, 0.0, 0);
  tree_law.kernel.balanced_cut_bound = 1;
  cases.push_back(tree_law);
  auto halves = make("4x4 grid into 2, uniform", g4, 2, 0.0, KernelKind::merge_split, 0.0, 0.0, 0);
  halves.kernel.balanced_cut_bound = 1;
  cases.push_back(halves);
  // Zero-population units, with the default M of docs/kernels.md ("The default bound M"): into 2
  // at [4, 5] (P = 9 < 3 lo, M = 1 + z + g = 5 where |U| - 1 = 11); into 3 at [2, 4], where merged
  // pairs of population 4 or 5 use the bound and pairs of 6 (3 lo = P, the fallback condition)
  // or more fall back to |U| - 1.
  const auto holes = grid(3, 4, {1, 6, 10});
  cases.push_back(make("3x4 grid with 3 empty units into 2, uniform", holes, 2, 0.12, KernelKind::merge_split, 0.0, 0.0, 0));
  cases.push_back(make("3x4 grid with 3 empty units into 3, spanning-tree law", holes, 3, 0.34,
                       KernelKind::merge_split, 1.0, 0.0, 0));
  auto weighted = make("irregular into 3, gamma 0.5, cut edges", odd, 3, 0.35, KernelKind::merge_split, 0.5, 0.4, 0);
  weighted.rules.cut_edges_weight = 1.0;
  cases.push_back(weighted);
  auto counties = make("irregular into 3, county splits", odd, 3, 0.35, KernelKind::merge_split, 0.0, 1.0, 0);
  counties.rules.county_splits_weight = 0.7;
  counties.rules.county_splits_max = 2;
  cases.push_back(counties);
  // County-weighted trees: gamma 0 checks the Hastings factor alone (the target stays uniform,
  // the proposal does not), gamma 1 the weighted spanning-tree law prod tau_w(P_i).
  auto county_trees = make("irregular into 3, county trees x3, uniform", odd, 3, 0.35, KernelKind::merge_split,
                           0.0, 0.0, 0);
  county_trees.kernel.county_tree_weight = 3.0;
  cases.push_back(county_trees);
  auto county_law = make("irregular into 3, county trees x4, weighted tree law", odd, 3, 0.35,
                         KernelKind::merge_split, 1.0, 0.5, 0);
  county_law.kernel.county_tree_weight = 4.0;
  county_law.rules.county_splits_weight = 0.5;
  cases.push_back(county_law);
  auto town_law = make("irregular into 3, county x2 and town x3 trees, gamma 0.5", odd, 3, 0.35,
                       KernelKind::merge_split, 0.5, 0.0, 0);
  town_law.kernel.county_tree_weight = 2.0;
  town_law.kernel.municipality_tree_weight = 3.0;
  cases.push_back(town_law);
  cases.push_back(make("4x4 grid into 2 of 7-9, uniform", g4, 2, 0.125, KernelKind::flip, 0.0, 0.0, 0));
  auto flip_cut = make("3x4 grid into 3, cut edges", g3x4, 3, 0.25, KernelKind::flip, 0.0, 0.5, 0);
  flip_cut.rules.cut_edges_weight = 1.0;
  cases.push_back(flip_cut);
  auto flip_odd = make("irregular into 3, cut edges", odd, 3, 0.35, KernelKind::flip, 0.0, 0.3, 0);
  flip_odd.rules.cut_edges_weight = 1.0;
  cases.push_back(flip_odd);
  cases.push_back(make("4x4 grid into 4", g4, 4, 0.0, KernelKind::recombination, 0.0, 0.0, 2));
  cases.push_back(make("irregular into 3", odd, 3, 0.35, KernelKind::recombination, 0.0, 0.0, 2));
  auto county_recom = make("irregular into 3, county trees x4", odd, 3, 0.35, KernelKind::recombination, 0.0, 0.0, 2);
  county_recom.kernel.county_tree_weight = 4.0;
  cases.push_back(county_recom);
  // Frozen districts: the law of the rest, with the frozen district's units fixed as in the start.
  std::vector<DistrictIndex> squares(16), rows(12);  // rows: units 0-3, 4-7, 8-11 (grid 3 wide)
  for (UnitIndex u = 0; u < 16; ++u) squares[u] = static_cast<DistrictIndex>((u / 8) * 2 + (u % 4) / 2);
  for (UnitIndex u = 0; u < 12; ++u) rows[u] = static_cast<DistrictIndex>(u / 4);
  auto frozen_tree = make("4x4 grid into 4, top-left square frozen, spanning-tree law", g4, 4, 0.0,
                          KernelKind::merge_split, 1.0, 0.0, 0);
  frozen_tree.kernel.balanced_cut_bound = 1;
  frozen_tree.kernel.frozen = {1, 0, 0, 0};
  frozen_tree.start = squares;
  cases.push_back(frozen_tree);
  auto frozen_flip = make("3x4 grid into 3, first four units frozen, cut edges", g3x4, 3, 0.25, KernelKind::flip, 0.0, 0.5, 0);
  frozen_flip.rules.cut_edges_weight = 1.0;
  frozen_flip.kernel.frozen = {1, 0, 0};
  frozen_flip.start = rows;
  cases.push_back(frozen_flip);
  auto frozen_recom = make("4x4 grid into 4, top-left square frozen", g4, 4, 0.0, KernelKind::recombination, 0.0,
                           0.0, 2);
  frozen_recom.kernel.frozen = {1, 0, 0, 0};
  frozen_recom.start = squares;
  cases.push_back(frozen_recom);
  for (auto& c : cases) c.samples = quick ? 10000 : 100000;
  return cases;
}

}  // namespace planmill
