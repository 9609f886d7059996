#include "planmill/moves/kernel.hpp"

#include "moves/flip_kernel.hpp"
#include "moves/tree_kernels.hpp"

namespace planmill {

EdgeIndex uniform_cut_edge(const Plan& plan, Rng& rng, std::size_t max_misses) noexcept {
  const UnitGraph& g = plan.graph();
  const std::size_t cut = plan.cut_edge_count();
  if (cut == 0) return kNoEdge;
  const auto edges = static_cast<std::uint32_t>(g.edge_count());
  for (std::size_t miss = 0; miss < max_misses; ++miss) {
    const EdgeIndex e = uniform_below(rng, edges);
    if (plan.district_of(g.edge_first(e)) != plan.district_of(g.edge_second(e))) return e;
  }
  // Still exactly uniform: every round of the rejection loop, and this scan for the j-th cut edge
  // with j uniform, each give every cut edge the same chance, and a mixture of uniform laws is
  // uniform. The scan costs one pass over the edges, as much as the misses before it.
  std::uint32_t j = uniform_below(rng, static_cast<std::uint32_t>(cut));
  for (EdgeIndex e = 0; e < edges; ++e)
    if (plan.district_of(g.edge_first(e)) != plan.district_of(g.edge_second(e)) && j-- == 0) return e;
  return kNoEdge;  // not reached while the plan's cut-edge count is right
}

EdgeIndex uniform_cut_edge(const Plan& plan, Rng& rng) noexcept {
  return uniform_cut_edge(plan, rng, plan.graph().edge_count());
}

std::unique_ptr<Kernel> make_kernel(const KernelSettings& settings, const UnitGraph& graph,
                                    std::size_t district_count) {
  switch (settings.kind) {
    case KernelKind::recombination:
      return std::make_unique<RecombinationKernel>(settings, graph, district_count);
    case KernelKind::merge_split:
      return std::make_unique<MergeSplitKernel>(settings, graph, district_count);
    case KernelKind::flip:
      return std::make_unique<FlipKernel>(settings, graph);
  }
  return nullptr;
}

}  // namespace planmill
