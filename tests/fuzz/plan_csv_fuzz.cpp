// Fuzz target: the plan file reader, over a 4x4 grid with unit ids "0".."15" and 4 districts.
// A plan that reads must write back to text that reads as the same plan.
#include <cstdint>

#include "fuzz_support.hpp"
#include "planmill/graph/unit_graph.hpp"
#include "planmill/seed/plan_csv.hpp"

using namespace planmill;

namespace {
UnitGraph make_grid() {
  UnitGraphBuilder b;
  for (UnitIndex u = 0; u < 16; ++u) (void)b.add_unit(std::to_string(u), 1 + u % 3);
  for (UnitIndex u = 0; u < 16; ++u) {
    if (u % 4 != 3) (void)b.add_edge(u, u + 1);
    if (u < 12) (void)b.add_edge(u, u + 4);
  }
  return std::move(b).build();
}
}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const GraphHandle grid = share_graph(make_grid());
  fuzz::expect_only_input_errors([&] {
    const Plan plan = parse_plan_csv(fuzz::as_text(data, size), "plan.csv", grid, 4);
    if (!plan.tallies_consistent()) fuzz::bug("tallies");
    const Plan again = parse_plan_csv(plan_csv_text(plan), "written plan", grid, 4);
    if (!(again == plan)) fuzz::bug("plan round trip");
  });
  return 0;
}
