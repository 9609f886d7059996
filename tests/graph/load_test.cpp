// The map loader: a good map loads with every attribute in place, and each kind of bad input is
// one InputError naming the file, the line and the column (docs/inputs.md lists them).
#include "planmill/graph/load.hpp"

#include <gtest/gtest.h>

#include "../io/temp_files.hpp"
#include "planmill/graph/map_csv.hpp"

namespace planmill {
namespace {

using test::expect_input_error;

constexpr const char* kUnits =
    "unit,pop,county,town,area,perim,grp,gov_a,gov_b,note\n"
    "a,10,C1,T1,1.5,4,3,6,4,x\n"
    "b,20,C1,T2,2.5,6,5,12,8,y\n"
    "c,30,\"C,2\",T2,1,4,7,10,20,z\n"
    "d,0,C3,T3,1,4,0,0,0,w\n";
constexpr const char* kAdjacency = "from,to,length\na,b,1\nb,c,2\nc,d,0.5\na,c,1\n";

class LoadTest : public ::testing::Test {
 protected:
  MapSpec spec(const std::string& units, const std::string& adjacency) const {
    MapSpec s;
    s.units_path = dir.write("units.csv", units);
    s.adjacency_path = dir.write("adjacency.csv", adjacency);
    s.id_column = "unit";
    s.population_column = "pop";
    s.county_column = "county";
    s.municipality_column = "town";
    s.area_column = "area";
    s.perimeter_column = "perim";
    s.group_columns = {"grp"};
    s.elections.push_back({"gov", {"A", "B"}, {"gov_a", "gov_b"}});
    s.source = "job.toml";
    return s;
  }
  std::string units_path() const { return (dir.path() / "units.csv").string(); }
  std::string adjacency_path() const { return (dir.path() / "adjacency.csv").string(); }

  test::TempDir dir;
};

TEST_F(LoadTest, GoodMapLoadsEveryAttribute) {
  LoadReport report;
  const UnitGraph g = load_unit_graph(spec(kUnits, kAdjacency), &report);
  ASSERT_EQ(g.unit_count(), 4U);
  EXPECT_EQ(g.edge_count(), 4U);
  EXPECT_EQ(g.total_population(), 60);
  EXPECT_EQ(g.unit_id(2), "c");
  EXPECT_EQ(g.population(1), 20);
  // Groups come first, then the election's columns, in the job's order.
  ASSERT_EQ(g.count_column_count(), 3U);
  EXPECT_EQ(g.count_column_name(0), "grp");
  EXPECT_EQ(g.group_columns(), (std::vector<std::size_t>{0}));
  ASSERT_EQ(g.elections().size(), 1U);
  EXPECT_EQ(g.elections()[0].columns, (std::vector<std::size_t>{1, 2}));
  EXPECT_EQ(g.count_column(2)[2], 20.0);
  EXPECT_EQ(g.counties().names, (std::vector<std::string>{"C1", "C,2", "C3"}));
  EXPECT_EQ(g.counties().code, (std::vector<std::uint32_t>{0, 0, 1, 2}));
  EXPECT_EQ(g.municipalities().code, (std::vector<std::uint32_t>{0, 1, 1, 2}));
  EXPECT_DOUBLE_EQ(g.area(1), 2.5);
  ASSERT_TRUE(g.has_edge_lengths());
  // Outer boundary is derived from perimeter minus shared lengths: a has 4 - (1 + 1) = 2.
  ASSERT_TRUE(g.has_outer_boundary());
  EXPECT_DOUBLE_EQ(g.outer_boundary(0), 2.0);
  EXPECT_DOUBLE_EQ(g.outer_boundary(3), 3.5);
  EXPECT_EQ(report.zero_population_units, 1U);
  EXPECT_EQ(report.duplicate_edges_merged, 0U);
}

TEST_F(LoadTest, CommittedExampleMapLoads) {
  MapSpec s;
  s.units_path = std::string(PLANMILL_TEST_DATA_DIR) + "/graph/grid3x3_units.csv";
  s.adjacency_path = std::string(PLANMILL_TEST_DATA_DIR) + "/graph/grid3x3_adjacency.csv";
  s.id_column = "unit";
  s.population_column = "pop";
  const UnitGraph g = load_unit_graph(s);
  EXPECT_EQ(g.unit_count(), 9U);
  EXPECT_EQ(g.edge_count(), 12U);  // a 3x3 rook grid has 2 * 3 * 2 = 12 edges
  EXPECT_EQ(g.total_population(), 45);
}

TEST_F(LoadTest, MissingNamedColumnListsTheColumns) {
  MapSpec s = spec(kUnits, kAdjacency);
  s.population_column = "people";
  const std::string m = expect_input_error([&] { (void)load_unit_graph(s); }, units_path(), 1, "people");
  EXPECT_NE(m.find("'map.population'"), std::string::npos) << m;
  EXPECT_NE(m.find("'unit', 'pop', 'county'"), std::string::npos) << m;
}

TEST_F(LoadTest, EmptyUnitFile) {
  expect_input_error([&] { (void)load_unit_graph(spec("", kAdjacency)); }, units_path(), 0, "");
}

TEST_F(LoadTest, EmptyAdjacencyFile) {
  expect_input_error([&] { (void)load_unit_graph(spec(kUnits, "\n\n")); }, adjacency_path(), 0, "");
}

TEST_F(LoadTest, UnitTableWithoutUnits) {
  expect_input_error([&] { (void)load_unit_graph(spec("unit,pop,county,town,area,perim,grp,gov_a,gov_b\n",
                                                      kAdjacency)); },
                     units_path(), 1, "");
}

TEST_F(LoadTest, DuplicateUnitIdNamesBothLines) {
  const std::string m = expect_input_error(
      [&] { (void)load_unit_graph(spec(std::string(kUnits) + "b,1,C1,T1,1,1,0,0,0,v\n", kAdjacency)); },
      units_path(), 6, "unit");
  EXPECT_NE(m.find("first on line 3"), std::string::npos) << m;
}

TEST_F(LoadTest, EmptyUnitId) {
  expect_input_error(
      [&] { (void)load_unit_graph(spec(std::string(kUnits) + ",1,C1,T1,1,1,0,0,0,v\n", kAdjacency)); },
      units_path(), 6, "unit");
}

TEST_F(LoadTest, NonNumericPopulation) {
  const std::string m = expect_input_error(
      [&] { (void)load_unit_graph(spec(std::string(kUnits) + "e,lots,C1,T1,1,1,0,0,0,v\n", kAdjacency)); },
      units_path(), 6, "pop");
  EXPECT_NE(m.find("not a number"), std::string::npos) << m;
}

TEST_F(LoadTest, NegativePopulation) {
  expect_input_error(
      [&] { (void)load_unit_graph(spec(std::string(kUnits) + "e,-3,C1,T1,1,1,0,0,0,v\n", kAdjacency)); },
      units_path(), 6, "pop");
}

TEST_F(LoadTest, PopulationNotWhole) {
  const std::string m = expect_input_error(
      [&] { (void)load_unit_graph(spec(std::string(kUnits) + "e,2.5,C1,T1,1,1,0,0,0,v\n", kAdjacency)); },
      units_path(), 6, "pop");
  EXPECT_NE(m.find("whole"), std::string::npos) << m;
}

// Issue 11, item 11: huge counts. With the fifth unit below the map has 5 units, so a count may be
// at most floor(2^53 / 5) (computed here in integers, apart from the loader's double arithmetic).
constexpr std::uint64_t kLargestCountOf5 = (std::uint64_t{1} << 53) / 5;

std::string too_large_text() { return "too large (at most " + std::to_string(kLargestCountOf5) + " for a map of 5 units"; }

TEST_F(LoadTest, HugeWholePopulationsAreTooLargeNotFractional) {
  for (const std::string pop : {"1e17", "1e19", "9007199254740993", "1801439850948199"}) {
    const std::string m = expect_input_error(
        [&] { (void)load_unit_graph(spec(std::string(kUnits) + "e," + pop + ",C1,T1,1,1,0,0,0,v\n", kAdjacency)); },
        units_path(), 6, "pop");
    EXPECT_NE(m.find(too_large_text()), std::string::npos) << m;
    EXPECT_EQ(m.find("whole"), std::string::npos) << m;
  }
}

TEST_F(LoadTest, WholeNumbersWithAnExponentAreAcceptedUpToTheBound) {
  const std::string largest = std::to_string(kLargestCountOf5);
  const std::string adjacency = std::string(kAdjacency) + "d,e,1\n";
  const UnitGraph g = load_unit_graph(
      spec(std::string(kUnits) + "e,1e6,C1,T1,1,1,1.5e1," + largest + ",0,v\n", adjacency));
  EXPECT_EQ(g.population(4), 1000000);
  EXPECT_EQ(g.count_column(0)[4], 15.0);
  EXPECT_EQ(g.count_column(1)[4], static_cast<double>(kLargestCountOf5));
  const UnitGraph at_bound =
      load_unit_graph(spec(std::string(kUnits) + "e," + largest + ",C1,T1,1,1,0,0,0,v\n", adjacency));
  EXPECT_EQ(at_bound.population(4), static_cast<std::int64_t>(kLargestCountOf5));
}

TEST_F(LoadTest, PopulationWhoseFractionTheDoubleRoundsAwayIsNotWhole) {
  // 1801439850948197.9 lies between 2^50 and 2^51, where doubles are 0.25 apart: it parses to the
  // whole 1801439850948198, but as written it is not whole.
  const std::string m = expect_input_error(
      [&] {
        (void)load_unit_graph(
            spec(std::string(kUnits) + "e,1801439850948197.9,C1,T1,1,1,0,0,0,v\n", kAdjacency));
      },
      units_path(), 6, "pop");
  EXPECT_NE(m.find("not a whole number"), std::string::npos) << m;
  expect_input_error(
      [&] { (void)load_unit_graph(spec(std::string(kUnits) + "e,1.25e1,C1,T1,1,1,0,0,0,v\n", kAdjacency)); },
      units_path(), 6, "pop");
}

TEST_F(LoadTest, HugeVoteAndGroupCountsAreTooLarge) {
  for (const std::string votes : {"1e308", "1e17", "9007199254740993"}) {
    const std::string m = expect_input_error(
        [&] { (void)load_unit_graph(spec(std::string(kUnits) + "e,1,C1,T1,1,1,0," + votes + ",0,v\n", kAdjacency)); },
        units_path(), 6, "gov_a");
    EXPECT_NE(m.find(too_large_text()), std::string::npos) << m;
  }
  expect_input_error(
      [&] { (void)load_unit_graph(spec(std::string(kUnits) + "e,1,C1,T1,1,1,1e19,0,0,v\n", kAdjacency)); },
      units_path(), 6, "grp");
}

TEST_F(LoadTest, NanCount) {
  expect_input_error(
      [&] { (void)load_unit_graph(spec(std::string(kUnits) + "e,1,C1,T1,1,1,NaN,0,0,v\n", kAdjacency)); },
      units_path(), 6, "grp");
}

TEST_F(LoadTest, InfiniteArea) {
  expect_input_error(
      [&] { (void)load_unit_graph(spec(std::string(kUnits) + "e,1,C1,T1,inf,1,0,0,0,v\n", kAdjacency)); },
      units_path(), 6, "area");
  expect_input_error(
      [&] { (void)load_unit_graph(spec(std::string(kUnits) + "e,1,C1,T1,1e999,1,0,0,0,v\n", kAdjacency)); },
      units_path(), 6, "area");
}

TEST_F(LoadTest, NegativeVoteCount) {
  expect_input_error(
      [&] { (void)load_unit_graph(spec(std::string(kUnits) + "e,1,C1,T1,1,1,0,-1,0,v\n", kAdjacency)); },
      units_path(), 6, "gov_a");
}

TEST_F(LoadTest, EmptyCountyCode) {
  expect_input_error(
      [&] { (void)load_unit_graph(spec(std::string(kUnits) + "e,1,,T1,1,1,0,0,0,v\n", kAdjacency)); },
      units_path(), 6, "county");
}

TEST_F(LoadTest, EmptyMunicipalityCodeMeansNone) {
  const UnitGraph g =
      load_unit_graph(spec(std::string(kUnits) + "e,1,C1,,1,1,0,0,0,v\n", std::string(kAdjacency) + "e,a,1\n"));
  EXPECT_EQ(g.municipalities().code[4], UnitCodes::kNone);
  EXPECT_EQ(g.municipalities().names.size(), 3U);
}

TEST_F(LoadTest, UnknownUnitInAdjacencyNamesTheId) {
  const std::string m = expect_input_error(
      [&] { (void)load_unit_graph(spec(kUnits, std::string(kAdjacency) + "d,zz,1\n")); }, adjacency_path(), 6,
      "to");
  EXPECT_NE(m.find("'zz'"), std::string::npos) << m;
}

TEST_F(LoadTest, UnknownUnitWithSpacesGetsAHint) {
  const std::string m = expect_input_error(
      [&] { (void)load_unit_graph(spec(kUnits, std::string(kAdjacency) + "d, a,1\n")); }, adjacency_path(), 6,
      "to");
  EXPECT_NE(m.find("remove the spaces"), std::string::npos) << m;
}

TEST_F(LoadTest, EdgeWithMissingUnit) {
  expect_input_error([&] { (void)load_unit_graph(spec(kUnits, std::string(kAdjacency) + ",d,1\n")); },
                     adjacency_path(), 6, "from");
}

TEST_F(LoadTest, SelfLoop) {
  const std::string m = expect_input_error(
      [&] { (void)load_unit_graph(spec(kUnits, std::string(kAdjacency) + "c,c,1\n")); }, adjacency_path(), 6,
      "to");
  EXPECT_NE(m.find("own neighbour"), std::string::npos) << m;
}

TEST_F(LoadTest, NegativeEdgeLength) {
  expect_input_error([&] { (void)load_unit_graph(spec(kUnits, std::string(kAdjacency) + "b,d,-2\n")); },
                     adjacency_path(), 6, "length");
}

TEST_F(LoadTest, NonNumericEdgeLength) {
  expect_input_error([&] { (void)load_unit_graph(spec(kUnits, std::string(kAdjacency) + "b,d,long\n")); },
                     adjacency_path(), 6, "length");
}

TEST_F(LoadTest, AdjacencyWithWrongColumnCount) {
  expect_input_error([&] { (void)load_unit_graph(spec(kUnits, "a\nb\n")); }, adjacency_path(), 1, "");
}

TEST_F(LoadTest, RowWithWrongFieldCount) {
  expect_input_error([&] { (void)load_unit_graph(spec(kUnits, std::string(kAdjacency) + "b,d\n")); },
                     adjacency_path(), 6, "");
}

TEST_F(LoadTest, DuplicateEdgesAreMergedCountedAndReported) {
  LoadReport report;
  // b,a repeats a,b in the other order; c,b repeats b,c with another length (the first is kept).
  const UnitGraph g =
      load_unit_graph(spec(kUnits, std::string(kAdjacency) + "b,a,1\nc,b,9\na,b,1\n"), &report);
  EXPECT_EQ(g.edge_count(), 4U);
  EXPECT_EQ(report.duplicate_edges_merged, 3U);
  ASSERT_EQ(report.warnings.size(), 2U);  // zero population and duplicates
  EXPECT_NE(report.warnings[1].find("3 edge(s)"), std::string::npos) << report.warnings[1];
  EXPECT_NE(report.warnings[1].find("line 6"), std::string::npos) << report.warnings[1];
  const UnitIndex b = *g.find_unit("b");
  const UnitIndex c = *g.find_unit("c");
  for (std::size_t i = 0; i < g.degree(b); ++i)
    if (g.neighbors(b)[i] == c) EXPECT_DOUBLE_EQ(g.edge_length(g.incident_edges(b)[i]), 2.0);
}

TEST_F(LoadTest, ZeroPopulationUnitsAreAllowedAndCounted) {
  LoadReport report;
  const UnitGraph g =
      load_unit_graph(spec(std::string(kUnits) + "e,0,C1,T1,1,1,0,0,0,v\n", std::string(kAdjacency) + "e,a,1\n"),
                      &report);
  EXPECT_EQ(g.unit_count(), 5U);
  EXPECT_EQ(report.zero_population_units, 2U);
  ASSERT_FALSE(report.warnings.empty());
  EXPECT_NE(report.warnings[0].find("2 unit(s) have population 0"), std::string::npos) << report.warnings[0];
}

TEST_F(LoadTest, DisconnectedMapNamesPartsAndSaysHowToBridge) {
  // Units e, f form an island of two; g stands alone.
  const std::string units = std::string(kUnits) + "e,1,C1,T1,1,1,0,0,0,v\nf,1,C1,T1,1,1,0,0,0,v\ng,1,C1,T1,1,1,0,0,0,v\n";
  const std::string m = expect_input_error(
      [&] { (void)load_unit_graph(spec(units, std::string(kAdjacency) + "e,f,1\n")); }, adjacency_path(), 0, "");
  EXPECT_NE(m.find("3 separate parts with 4, 2, 1 units"), std::string::npos) << m;
  EXPECT_NE(m.find("'e', 'f', 'g'"), std::string::npos) << m;
  EXPECT_NE(m.find("bridging edges"), std::string::npos) << m;
  EXPECT_NE(m.find("ferry"), std::string::npos) << m;
}

TEST_F(LoadTest, ColumnUsedTwiceNamesTheKey) {
  MapSpec s = spec(kUnits, kAdjacency);
  s.elections.push_back({"senate", {"A", "B"}, {"grp", "gov_b"}});
  const std::string m = expect_input_error([&] { (void)load_unit_graph(s); }, "job.toml", 0, "map.elections.columns");
  EXPECT_NE(m.find("'grp'"), std::string::npos) << m;
}

TEST_F(LoadTest, ElectionWithMismatchedParties) {
  MapSpec s = spec(kUnits, kAdjacency);
  s.elections[0].parties = {"A"};
  expect_input_error([&] { (void)load_unit_graph(s); }, "job.toml", 0, "map.elections");
}

TEST_F(LoadTest, HeaderWithTwoColumnsOfOneName) {
  expect_input_error(
      [&] { (void)load_unit_graph(spec("unit,pop,pop,county,town,area,perim,grp,gov_a,gov_b\n", kAdjacency)); },
      units_path(), 1, "pop");
}

TEST_F(LoadTest, UnitFileThatCannotBeOpened) {
  MapSpec s = spec(kUnits, kAdjacency);
  s.units_path = (dir.path() / "nowhere.csv").string();
  expect_input_error([&] { (void)load_unit_graph(s); }, s.units_path, 0, "");
}

TEST_F(LoadTest, BuildsFromTablesInMemory) {
  MapSpec s;
  s.id_column = "id";
  s.population_column = "p";
  const UnitGraph g = build_unit_graph(s, parse_csv_text("id,p\nx,1\ny,2\n", "u"), parse_csv_text("a,b\nx,y\n", "e"));
  EXPECT_EQ(g.edge_count(), 1U);
  EXPECT_FALSE(g.has_edge_lengths());
  const UnitGraph single = build_unit_graph(s, parse_csv_text("id,p\nx,1\n", "u"), parse_csv_text("a,b\n", "e"));
  EXPECT_EQ(single.unit_count(), 1U);
}

}  // namespace
}  // namespace planmill
