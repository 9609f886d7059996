// Plan files: a written plan reads back equal, and each kind of bad plan file is an InputError
// naming the file, line and column.
#include "planmill/seed/plan_csv.hpp"

#include <gtest/gtest.h>

#include "planmill/graph/unit_graph.hpp"
#include "../io/temp_files.hpp"

namespace planmill {
namespace {

using test::expect_input_error;

// Four units in a path; ids chosen to need CSV quoting.
UnitGraph odd_ids() {
  UnitGraphBuilder b;
  for (const char* id : {"a", "b,1", "say \"c\"", " d"}) (void)b.add_unit(id, 1);
  for (UnitIndex u = 0; u + 1 < 4; ++u) (void)b.add_edge(u, u + 1);
  return std::move(b).build();
}

TEST(PlanCsv, WriteThenReadGivesTheSamePlan) {
  test::TempDir dir;
  const GraphHandle g_handle = share_graph(odd_ids());
  const UnitGraph& g = *g_handle;
  const Plan plan(g_handle, 2, {0, 0, 1, 1});
  const std::string path = (dir.path() / "plan.csv").string();
  write_plan_csv(path, plan);
  EXPECT_EQ(test::read_file(path), "unit,district\na,1\n\"b,1\",1\n\"say \"\"c\"\"\",2\n\" d\",2\n");
  const Plan back = read_plan_csv(path, g_handle, 2);
  EXPECT_TRUE(back == plan);
}

TEST(PlanCsv, RowsInAnyOrder) {
  const GraphHandle g_handle = share_graph(odd_ids());
  const UnitGraph& g = *g_handle;
  const Plan p = parse_plan_csv("u,d\n\" d\",1\na,2\n\"b,1\",2.0\n\"say \"\"c\"\"\",1\n", "p.csv", g_handle, 2);
  EXPECT_EQ(p.district_of(0), 1);
  EXPECT_EQ(p.district_of(3), 0);
  EXPECT_EQ(p.district_of(1), 1);
}

const std::string kGood = "u,d\na,1\n\"b,1\",1\n\"say \"\"c\"\"\",2\n";  // without " d"

TEST(PlanCsv, UnknownId) {
  const GraphHandle g_handle = share_graph(odd_ids());
  const UnitGraph& g = *g_handle;
  const std::string m =
      expect_input_error([&] { (void)parse_plan_csv(kGood + "e,2\n", "p.csv", g_handle, 2); }, "p.csv", 5, "u");
  EXPECT_NE(m.find("'e'"), std::string::npos) << m;
}

TEST(PlanCsv, DuplicatedId) {
  const GraphHandle g_handle = share_graph(odd_ids());
  const UnitGraph& g = *g_handle;
  const std::string m =
      expect_input_error([&] { (void)parse_plan_csv(kGood + "a,2\n", "p.csv", g_handle, 2); }, "p.csv", 5, "u");
  EXPECT_NE(m.find("first on line 2"), std::string::npos) << m;
}

TEST(PlanCsv, MissingUnitsAreCountedAndNamed) {
  const GraphHandle g_handle = share_graph(odd_ids());
  const UnitGraph& g = *g_handle;
  const std::string m = expect_input_error([&] { (void)parse_plan_csv(kGood, "p.csv", g_handle, 2); }, "p.csv", 0, "u");
  EXPECT_NE(m.find("1 unit(s)"), std::string::npos) << m;
  EXPECT_NE(m.find("' d'"), std::string::npos) << m;
}

TEST(PlanCsv, DistrictOutOfRange) {
  const GraphHandle g_handle = share_graph(odd_ids());
  const UnitGraph& g = *g_handle;
  expect_input_error([&] { (void)parse_plan_csv(kGood + "\" d\",3\n", "p.csv", g_handle, 2); }, "p.csv", 5, "d");
  expect_input_error([&] { (void)parse_plan_csv(kGood + "\" d\",0\n", "p.csv", g_handle, 2); }, "p.csv", 5, "d");
}

TEST(PlanCsv, DistrictNotAWholeNumber) {
  const GraphHandle g_handle = share_graph(odd_ids());
  const UnitGraph& g = *g_handle;
  expect_input_error([&] { (void)parse_plan_csv(kGood + "\" d\",1.5\n", "p.csv", g_handle, 2); }, "p.csv", 5, "d");
  expect_input_error([&] { (void)parse_plan_csv(kGood + "\" d\",two\n", "p.csv", g_handle, 2); }, "p.csv", 5, "d");
  expect_input_error([&] { (void)parse_plan_csv(kGood + "\" d\",\n", "p.csv", g_handle, 2); }, "p.csv", 5, "d");
}

// Issue 11, item 11: a huge whole district number is out of range, not "not a whole number";
// 2e0 is district 2, written with an exponent.
TEST(PlanCsv, HugeWholeDistrictIsOutOfRangeAndExponentsAreWhole) {
  const GraphHandle g_handle = share_graph(odd_ids());
  for (const std::string d : {"1e19", "1e17", "9007199254740993"}) {
    const std::string m =
        expect_input_error([&] { (void)parse_plan_csv(kGood + "\" d\"," + d + "\n", "p.csv", g_handle, 2); },
                           "p.csv", 5, "d");
    EXPECT_NE(m.find("outside 1..2"), std::string::npos) << m;
  }
  const Plan plan = parse_plan_csv(kGood + "\" d\",2e0\n", "p.csv", g_handle, 2);
  EXPECT_EQ(plan.district_of(3), 1);
}

TEST(PlanCsv, EmptyDistrictMeansTheWrongK) {
  const GraphHandle g_handle = share_graph(odd_ids());
  const UnitGraph& g = *g_handle;
  const std::string m =
      expect_input_error([&] { (void)parse_plan_csv(kGood + "\" d\",2\n", "p.csv", g_handle, 3); }, "p.csv", 0, "d");
  EXPECT_NE(m.find("district 3 has no units"), std::string::npos) << m;
}

TEST(PlanCsv, WrongColumnCount) {
  const GraphHandle g_handle = share_graph(odd_ids());
  const UnitGraph& g = *g_handle;
  expect_input_error([&] { (void)parse_plan_csv("u,d,x\na,1,1\n", "p.csv", g_handle, 2); }, "p.csv", 1, "");
}

TEST(PlanCsv, MissingFile) {
  test::TempDir dir;
  const GraphHandle g_handle = share_graph(odd_ids());
  const UnitGraph& g = *g_handle;
  const std::string path = (dir.path() / "none.csv").string();
  expect_input_error([&] { (void)read_plan_csv(path, g_handle, 2); }, path, 0, "");
}

}  // namespace
}  // namespace planmill
