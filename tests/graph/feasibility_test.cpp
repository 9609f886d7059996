// Feasibility on its face: each impossible request is refused with the job key to change, and
// requests at the edge of the bounds pass.
#include "planmill/graph/feasibility.hpp"

#include <gtest/gtest.h>

#include "../io/temp_files.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

using test::expect_input_error;

TEST(Feasibility, ReasonableRequestPasses) {
  const UnitGraph g = test::grid(4, 4);
  EXPECT_NO_THROW(check_feasible(g, 4, 0.0, "job.toml"));
  EXPECT_NO_THROW(check_feasible(g, 16, 0.0, "job.toml"));
  EXPECT_NO_THROW(check_feasible(g, 1, 0.0, "job.toml"));
}

TEST(Feasibility, ZeroDistricts) {
  expect_input_error([] { check_feasible(test::grid(2, 2), 0, 0.05, "job.toml"); }, "job.toml", 0, "districts.count");
}

TEST(Feasibility, MoreDistrictsThanUnits) {
  const std::string m = expect_input_error([] { check_feasible(test::grid(2, 2), 5, 0.05, "job.toml"); },
                                           "job.toml", 0, "districts.count");
  EXPECT_NE(m.find("fewer districts"), std::string::npos) << m;
}

TEST(Feasibility, NoPeople) {
  const UnitGraph g = test::graph_from_edges(3, test::path_edges(3), {0, 0, 0});
  expect_input_error([&] { check_feasible(g, 2, 0.05, "job.toml"); }, "job.toml", 0, "map.population");
}

TEST(Feasibility, UnitLargerThanAnyDistrict) {
  // total 100, k = 4: ideal 25, at 10% a district holds at most 27.5 -> 27 people; unit "3" has 40.
  const UnitGraph g = test::graph_from_edges(4, test::path_edges(4), {20, 20, 20, 40});
  const std::string m = expect_input_error([&] { check_feasible(g, 4, 0.10, "job.toml"); }, "job.toml", 0,
                                           "rules.population_tolerance");
  EXPECT_NE(m.find("unit '3'"), std::string::npos) << m;
  EXPECT_NE(m.find("split the unit"), std::string::npos) << m;
  // With 2 districts (ideal 50) the unit fits.
  EXPECT_NO_THROW(check_feasible(g, 2, 0.10, "job.toml"));
}

TEST(Feasibility, NoWholePopulationFitsTheBounds) {
  // total 10, k = 3: ideal 3.33; at 1% the bounds are [3.3, 3.37], which hold no whole number.
  const UnitGraph g = test::graph_from_edges(10, test::path_edges(10));
  expect_input_error([&] { check_feasible(g, 3, 0.01, "job.toml"); }, "job.toml", 0, "rules.population_tolerance");
}

TEST(Feasibility, TotalCannotBeShared) {
  // total 10, k = 3, 10%: bounds [3.0, 3.67] allow only 3 people per district, 9 < 10 in all.
  const UnitGraph g = test::graph_from_edges(10, test::path_edges(10));
  const std::string m = expect_input_error([&] { check_feasible(g, 3, 0.10, "job.toml"); }, "job.toml", 0,
                                           "rules.population_tolerance");
  EXPECT_NE(m.find("cannot be shared"), std::string::npos) << m;
  // At 20% a district may hold 4 (3 + 3 + 4 = 10).
  EXPECT_NO_THROW(check_feasible(g, 3, 0.20, "job.toml"));
}

TEST(Feasibility, TooFewPopulatedUnits) {
  const UnitGraph g = test::graph_from_edges(4, test::path_edges(4), {0, 0, 5, 5});
  expect_input_error([&] { check_feasible(g, 3, 0.5, "job.toml"); }, "job.toml", 0, "districts.count");
}

TEST(Feasibility, NegativeTolerance) {
  expect_input_error([] { check_feasible(test::grid(2, 2), 2, -0.1, "job.toml"); }, "job.toml", 0,
                     "rules.population_tolerance");
}

}  // namespace
}  // namespace planmill
