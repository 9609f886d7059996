#include "planmill/moves/kernel.hpp"

#include "moves/flip_kernel.hpp"
#include "moves/tree_kernels.hpp"

namespace planmill {

EdgeIndex uniform_cut_edge(const Plan& plan, Rng& rng) noexcept {
  const UnitGraph& g = plan.graph();
  const auto edges = static_cast<std::uint32_t>(g.edge_count());
  for (;;) {
    const EdgeIndex e = uniform_below(rng, edges);
    if (plan.district_of(g.edge_first(e)) != plan.district_of(g.edge_second(e))) return e;
  }
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
