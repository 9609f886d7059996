// Measures against published identities and formulas, and hand-worked examples (sources beside
// each check), and the evaluator against them on plans of small maps.
#include "planmill/measures/measures.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <bit>
#include <cmath>
#include <numbers>
#include <stdexcept>
#include <vector>

#include "count_allocations.hpp"
#include "planmill/base/random.hpp"
#include "planmill/rules/rules.hpp"
#include "small_graphs.hpp"

namespace planmill {
namespace {

using std::numbers::pi;

// ---- Efficiency gap ----

// Stephanopoulos and McGhee (2015), "Partisan gerrymandering and the efficiency gap", U. Chicago
// Law Review 82: with equal turnout in every district, EG = (S - 1/2) - 2 (V - 1/2), S and V the
// party's seat and vote shares (written here for party A, whose advantage is positive).
TEST(EfficiencyGap, EqualTurnoutIdentity) {
  Rng rng = make_stream(13, 1);
  for (int trial = 0; trial < 200; ++trial) {
    const std::size_t k = 1 + rng() % 40;
    std::vector<double> a(k), b(k);
    double votes_a = 0.0;
    std::size_t won = 0;
    for (std::size_t d = 0; d < k; ++d) {
      a[d] = static_cast<double>(rng() % 1002);  // turnout 1,001 everywhere: no ties
      b[d] = 1001 - a[d];
      votes_a += a[d];
      won += a[d] > b[d] ? 1 : 0;
    }
    const double s = static_cast<double>(won) / static_cast<double>(k);
    const double v = votes_a / (1001.0 * static_cast<double>(k));
    EXPECT_NEAR(efficiency_gap(a, b), (s - 0.5) - 2.0 * (v - 0.5), 1e-12) << "trial " << trial;
  }
}

// Hand-worked (wasted votes as Stephanopoulos and McGhee 2015 define them: a winner's votes
// beyond half the district's, all of a loser's):
//   equal turnout 100: (70,30) (40,60) (45,55): A wastes 20+40+45 = 105, B 30+10+5 = 45,
//   EG = (45 - 105) / 300 = -0.2 (and the identity: (1/3 - 1/2) - 2 (155/300 - 1/2) = -0.2);
//   unequal turnout: (60,20) (10,30) (35,45) (50,50): A wastes 20+10+35+50 = 115,
//   B 20+10+5+50 = 85, EG = (85 - 115) / 300 = -0.1.
TEST(EfficiencyGap, HandWorked) {
  EXPECT_NEAR(efficiency_gap(std::vector<double>{70, 40, 45}, std::vector<double>{30, 60, 55}), -0.2, 1e-15);
  EXPECT_NEAR(efficiency_gap(std::vector<double>{60, 10, 35, 50}, std::vector<double>{20, 30, 45, 50}),
              -0.1, 1e-15);
  // Swapping the parties flips the sign.
  EXPECT_NEAR(efficiency_gap(std::vector<double>{30, 60, 55}, std::vector<double>{70, 40, 45}), 0.2, 1e-15);
  EXPECT_TRUE(std::isnan(efficiency_gap(std::vector<double>{0, 0}, std::vector<double>{0, 0})));
}

// ---- Seats, mean-median, partisan bias (hand-worked) ----

// Equal turnout 100, A's shares 0.30 0.40 0.45 0.60 0.80: A wins 2; median 0.45, mean 0.51, so
// median - mean = -0.06; statewide share V = 255/500 = 0.51, a uniform swing of -0.01 leaves A
// 0.29 0.39 0.44 0.59 0.79: 2 seats of 5 at 50%, bias 0.4 - 0.5 = -0.1.
TEST(PartisanMeasures, HandWorkedFiveDistricts) {
  const std::vector<double> a = {30, 40, 45, 60, 80}, b = {70, 60, 55, 40, 20};
  const Seats won = seats(a, b);
  EXPECT_EQ(won.a, 2U);
  EXPECT_EQ(won.b, 3U);
  std::vector<double> shares(5);
  const double v = vote_shares(a, b, shares);
  EXPECT_NEAR(v, 0.51, 1e-15);
  ShareSorter(shares.size()).sort(shares);
  EXPECT_NEAR(mean_median(shares), -0.06, 1e-15);
  EXPECT_NEAR(partisan_bias(shares, v), -0.1, 1e-15);
}

// Unequal turnout: (30,10) (20,80) (40,60) (55,45): shares 0.75 0.2 0.4 0.55, A wins 2, B 2.
// Sorted 0.2 0.4 0.55 0.75: median (0.4 + 0.55)/2 = 0.475, mean 0.475, difference 0. Statewide
// V = 145/340 = 0.42647: after the swing A holds the districts above V (0.55, 0.75), 2 of 4,
// bias 0. A tied district counts half: shares 0.4 0.5 0.6 at V = 0.5 give 1.5 / 3 - 1/2 = 0.
TEST(PartisanMeasures, HandWorkedUnequalTurnoutAndTies) {
  const std::vector<double> a = {30, 20, 40, 55}, b = {10, 80, 60, 45};
  std::vector<double> shares(4);
  const double v = vote_shares(a, b, shares);
  EXPECT_NEAR(v, 145.0 / 340.0, 1e-15);
  ShareSorter(shares.size()).sort(shares);
  EXPECT_EQ(shares, (std::vector<double>{0.2, 0.4, 0.55, 0.75}));
  EXPECT_NEAR(mean_median(shares), 0.0, 1e-15);
  EXPECT_NEAR(partisan_bias(shares, v), 0.0, 1e-15);
  EXPECT_NEAR(partisan_bias(std::vector<double>{0.4, 0.5, 0.6}, 0.5), 0.0, 1e-15);
  // 0.3 0.52 0.53 0.54 at V = 0.4725 (equal turnout): A holds 3 of 4 at 50%, bias +0.25.
  EXPECT_NEAR(partisan_bias(std::vector<double>{0.3, 0.52, 0.53, 0.54}, 0.4725), 0.25, 1e-15);
  // A tie in a district goes to nobody.
  const Seats tie = seats(std::vector<double>{50, 60}, std::vector<double>{50, 40});
  EXPECT_EQ(tie.a, 1U);
  EXPECT_EQ(tie.b, 0U);
}

// ---- Declination ----

// Warrington (2018), "Introduction to the declination function for gerrymanders" (arXiv
// 1803.04799), formula and reference code: for A's shares, theta = atan((1 - 2 mean(B-won)) k / k_B),
// gamma = atan((2 mean(A-won) - 1) k / k_A), delta = 2 (gamma - theta) / pi, with shares <= 1/2
// won by B; his delta > 0 means an advantage for B, ours is -delta. Hand-worked for 0.3 0.3 0.7:
// theta = atan(0.4 * 3/2) = atan(0.6) = 0.5404195003, gamma = atan(0.4 * 3) = atan(1.2) =
// 0.8760580506, delta = 2 * 0.3356385503 / pi = 0.2136741375: ours is -0.2136741375.
TEST(Declination, HandWorkedAgainstWarringtonsFormula) {
  EXPECT_NEAR(declination(std::vector<double>{0.3, 0.3, 0.7}), -0.2136741375, 1e-10);
  // 0.35 0.45 0.5 0.6 0.65 0.9: B wins 0.35 0.45 0.5 (mean 13/30), A 0.6 0.65 0.9 (mean 43/60);
  // theta = atan((1 - 26/30) * 2) = atan(4/15), gamma = atan((86/60 - 1) * 2) = atan(13/15).
  const double want = 2.0 * (std::atan(4.0 / 15.0) - std::atan(13.0 / 15.0)) / pi;
  EXPECT_NEAR(declination(std::vector<double>{0.35, 0.45, 0.5, 0.6, 0.65, 0.9}), want, 1e-15);
  EXPECT_NEAR(want, -0.2887, 1e-4);  // atan(0.2667) = 0.2606, atan(0.8667) = 0.7141
  // Mirror image: the other party's shares give the opposite sign.
  EXPECT_NEAR(declination(std::vector<double>{0.1, 0.35, 0.4, 0.5000001, 0.55, 0.65}), -want, 1e-6);
  // Undefined when one party wins every district.
  EXPECT_TRUE(std::isnan(declination(std::vector<double>{0.55, 0.6, 0.7})));
  EXPECT_TRUE(std::isnan(declination(std::vector<double>{0.2, 0.4, 0.5})));
}

// ---- Sorting (std::sort as the reference) ----

// Shares in [0, 1] with ties, NaN, and values outside [0, 1] (a count over a smaller column).
TEST(ShareSorter, AgreesWithStdSortAndPutsNaNLast) {
  Rng rng = make_stream(13, 2);
  ShareSorter sorter(300);
  for (std::size_t n = 0; n <= 300; n += 1 + n / 7) {
    std::vector<double> shares(n);
    for (double& x : shares) {
      const std::uint32_t r = rng() % 12;
      x = r == 0 ? std::nan("") : r == 1 ? 1.0 + rng() % 7 : r == 2 ? -0.25 : static_cast<double>(rng() % 50) / 49.0;
    }
    std::vector<double> want;
    for (const double x : shares)
      if (!std::isnan(x)) want.push_back(x);
    std::sort(want.begin(), want.end());
    const std::size_t numbers = want.size();
    sorter.sort(shares);
    for (std::size_t i = 0; i < n; ++i) {
      if (i < numbers) EXPECT_EQ(shares[i], want[i]) << n << " " << i;
      else EXPECT_TRUE(std::isnan(shares[i])) << n << " " << i;
    }
  }
}

// ---- Counts in bands and above thresholds ----

TEST(ShareCounts, MajorityMeansMoreThanHalf) {
  const std::vector<double> sorted = {0.2, 0.45, 0.5, 0.5, 0.55, 0.7};
  EXPECT_EQ(count_above(sorted, 0.5), 2U);  // 0.5 is not a majority
  EXPECT_EQ(count_above(sorted, 0.4), 5U);
  EXPECT_EQ(count_above(sorted, 0.7), 0U);
  EXPECT_EQ(count_within(sorted, 0.45, 0.55), 4U);  // both ends in the band
  EXPECT_EQ(count_within(sorted, 0.46, 0.49), 0U);
  EXPECT_EQ(count_above(std::vector<double>{0.6, std::nan("")}, 0.5), 1U);
  EXPECT_EQ(count_within(std::vector<double>{0.3, 0.5, std::nan(""), std::nan("")}, 0.4, 0.6), 1U);
}

// ---- Polsby-Popper ----

// Polsby and Popper (1991), "The third criterion: compactness as a procedural safeguard against
// partisan gerrymandering", Yale Law & Policy Review 9: 4 pi A / P^2. A square of side s:
// 4 pi s^2 / (4 s)^2 = pi / 4. A regular n-gon of circumradius 1 (area (n/2) sin(2 pi / n),
// perimeter 2 n sin(pi / n)) gives pi / (n tan(pi / n)), rising to 1 (the disc) as n grows.
TEST(PolsbyPopper, SquareAndRegularPolygons) {
  EXPECT_NEAR(polsby_popper(1.0, 4.0), pi / 4, 1e-15);
  EXPECT_NEAR(polsby_popper(9.0, 12.0), pi / 4, 1e-15);
  double last = 0.0;
  for (int n = 3; n <= 4096; n *= 2) {
    const double area = 0.5 * n * std::sin(2 * pi / n), perimeter = 2.0 * n * std::sin(pi / n);
    const double pp = polsby_popper(area, perimeter);
    EXPECT_NEAR(pp, pi / (n * std::tan(pi / n)), 1e-12);
    EXPECT_GT(pp, last);
    EXPECT_LT(pp, 1.0);
    last = pp;
  }
  EXPECT_GT(last, 1.0 - 1e-6);
  EXPECT_NEAR(polsby_popper(0.5 * 6 * std::sin(pi / 3), 6.0), pi * std::sqrt(3.0) / 6, 1e-15);  // hexagon
  EXPECT_TRUE(std::isnan(polsby_popper(1.0, 0.0)));
}

// ---- The evaluator on plans ----

// rows x cols grid of unit squares: area 1, shared sides of length 1, outer sides on the edge.
test::GraphExtras unit_squares(std::uint32_t rows, std::uint32_t cols, test::GraphExtras x = {}) {
  x.area.assign(static_cast<std::size_t>(rows) * cols, 1.0);
  x.outer_boundary.assign(x.area.size(), 0.0);
  for (std::uint32_t r = 0; r < rows; ++r)
    for (std::uint32_t c = 0; c < cols; ++c)
      x.outer_boundary[r * cols + c] = (r == 0) + (r + 1 == rows) + (c == 0) + (c + 1 == cols);
  x.edge_length.assign(test::grid_edges(rows, cols).size(), 1.0);
  return x;
}

std::vector<DistrictIndex> blocks_of_two(std::uint32_t rows, std::uint32_t cols) {
  std::vector<DistrictIndex> d(static_cast<std::size_t>(rows) * cols);
  const std::uint32_t per_row = cols / 2;
  for (std::uint32_t r = 0; r < rows; ++r)
    for (std::uint32_t c = 0; c < cols; ++c) d[r * cols + c] = static_cast<DistrictIndex>((r / 2) * per_row + c / 2);
  return d;
}

double scalar(const MeasureEvaluator& m, const std::string& name) {
  const auto& names = m.scalar_names();
  for (std::size_t i = 0; i < names.size(); ++i)
    if (names[i] == name) return m.scalars()[i];
  throw std::logic_error("no measure " + name);
}

// 4 x 4 unit squares. Four 2 x 2 districts: area 4, perimeter 8, Polsby-Popper pi/4 each; four
// 4 x 1 stripes: area 4, perimeter 10, 16 pi / 100 each (4 pi A / P^2 by hand).
TEST(MeasureEvaluator, PolsbyPopperOfSquareAndStripeDistricts) {
  const GraphHandle g = share_graph(test::grid(4, 4, unit_squares(4, 4)));
  MeasureEvaluator m(g, 4, MeasureSpec{});
  m.evaluate(Plan(g, 4, blocks_of_two(4, 4)));
  EXPECT_NEAR(scalar(m, "compactness.polsby_popper_min"), pi / 4, 1e-15);
  EXPECT_NEAR(scalar(m, "compactness.polsby_popper_mean"), pi / 4, 1e-15);
  EXPECT_EQ(scalar(m, "compactness.cut_edges"), 8.0);
  m.evaluate(Plan(g, 4, test::stripe_assignment(4, 4, 4)));
  EXPECT_NEAR(scalar(m, "compactness.polsby_popper_min"), 16 * pi / 100, 1e-15);
  EXPECT_EQ(scalar(m, "compactness.cut_edges"), 12.0);
  // Mixed: stripes 0 | 1 | 2-3 of width 1, 1, 2: perimeters 10, 10, 12, areas 4, 4, 8.
  std::vector<DistrictIndex> labels = test::stripe_assignment(4, 4, 4);
  for (DistrictIndex& d : labels) d = std::min<DistrictIndex>(d, 2);
  const Plan mixed(g, 3, labels);
  MeasureEvaluator three(g, 3, MeasureSpec{});
  three.evaluate(mixed);
  EXPECT_NEAR(scalar(three, "compactness.polsby_popper_min"), 16 * pi / 100, 1e-15);
  EXPECT_NEAR(scalar(three, "compactness.polsby_popper_mean"),
              (16 * pi / 100 + 16 * pi / 100 + 32 * pi / 144) / 3, 1e-15);
}

// Without areas, outer boundaries and shared lengths the measure is not available: NaN.
TEST(MeasureEvaluator, PolsbyPopperIsNaNWithoutGeometry) {
  test::GraphExtras no_outer = unit_squares(4, 4);
  no_outer.outer_boundary.clear();
  for (const test::GraphExtras& x : {test::GraphExtras{}, no_outer}) {
    const GraphHandle g = share_graph(test::grid(4, 4, x));
    MeasureEvaluator m(g, 4, MeasureSpec{});
    m.evaluate(Plan(g, 4, blocks_of_two(4, 4)));
    EXPECT_TRUE(std::isnan(scalar(m, "compactness.polsby_popper_min")));
    EXPECT_TRUE(std::isnan(scalar(m, "compactness.polsby_popper_mean")));
    EXPECT_EQ(scalar(m, "compactness.cut_edges"), 8.0);
  }
}

// 4 x 4 grid, stripes of one column each (districts 0..3 left to right), votes and group per
// unit chosen so the district tallies are the hand-worked elections above.
TEST(MeasureEvaluator, ElectionsAndGroupsFromDistrictTallies) {
  test::GraphExtras x;
  x.population.assign(16, 10);
  std::vector<double> a(16), b(16), grp(16), vap(16, 8.0);
  const double district_a[4] = {30, 20, 40, 55}, district_b[4] = {10, 80, 60, 45};
  // Group of district population 40: 20 (exactly half), 21, 8, 40; of VAP 32: 16 is half.
  const double district_grp[4] = {20, 21, 8, 16};
  for (UnitIndex u = 0; u < 16; ++u) {
    const std::uint32_t d = u % 4;
    a[u] = district_a[d] / 4, b[u] = district_b[d] / 4, grp[u] = district_grp[d] / 4;
  }
  x.counts = {{"a", a}, {"b", b}, {"grp", grp}, {"vap", vap}};
  x.groups = {2};
  const GraphHandle g = share_graph(test::grid(4, 4, x));
  MeasureSpec spec;
  spec.elections = {{"e1", "red", "blue", 0, 1}};
  spec.groups = {{"grp", 2, std::nullopt, {0.5, 0.25}}, {"grp_vap", 2, 3, {0.5}}};
  spec.competitive_low = 0.4, spec.competitive_high = 0.6;
  MeasureEvaluator m(g, 4, spec);
  m.evaluate(Plan(g, 4, test::stripe_assignment(4, 4, 4)));
  EXPECT_EQ(scalar(m, "election.e1.seats.red"), 2.0);
  EXPECT_EQ(scalar(m, "election.e1.seats.blue"), 2.0);
  // Wasted: A 30-20, 20, 40, 55-50 -> 10+20+40+5 = 75; B 10, 80-50, 60-50, 45 -> 10+30+10+45 = 95.
  EXPECT_NEAR(scalar(m, "election.e1.efficiency_gap"), (95.0 - 75.0) / 340.0, 1e-15);
  EXPECT_NEAR(scalar(m, "election.e1.mean_median"), 0.0, 1e-15);
  EXPECT_NEAR(scalar(m, "election.e1.partisan_bias"), 0.0, 1e-15);
  EXPECT_NEAR(scalar(m, "election.e1.declination"), declination(std::vector<double>{0.2, 0.4, 0.55, 0.75}), 0);
  EXPECT_EQ(scalar(m, "election.e1.competitive_districts"), 2.0);  // 0.4 and 0.55
  const auto shares = m.sorted_vector(0);
  EXPECT_EQ(std::vector<double>(shares.begin(), shares.end()), (std::vector<double>{0.2, 0.4, 0.55, 0.75}));
  // Group of population: 0.5 (not a majority), 0.525, 0.2, 0.4.
  EXPECT_EQ(scalar(m, "group.grp.districts_above_0.5"), 1.0);
  EXPECT_EQ(scalar(m, "group.grp.districts_above_0.25"), 3.0);
  EXPECT_EQ(std::vector<double>(m.sorted_vector(1).begin(), m.sorted_vector(1).end()),
            (std::vector<double>{0.2, 0.4, 0.5, 0.525}));
  // Of VAP 32: 0.625, 0.65625, 0.25, 0.5 -> two majorities.
  EXPECT_EQ(scalar(m, "group.grp_vap.districts_above_0.5"), 2.0);
  EXPECT_EQ(m.vector_names(), (std::vector<std::string>{"election.e1.sorted_shares", "group.grp.sorted_shares",
                                                        "group.grp_vap.sorted_shares"}));
}

// A district without votes has no share: the election's share measures are NaN; seats and the
// efficiency gap still count. Districts (3,1) (0,0) (2,4): A wastes 1 + 0 + 2, B 1 + 0 + 1, so
// EG = (2 - 3) / 10.
TEST(MeasureEvaluator, ADistrictWithoutVotesMakesTheShareMeasuresNaN) {
  test::GraphExtras x;
  x.counts = {{"a", {3, 0, 2, 0}}, {"b", {1, 0, 4, 0}}};
  const GraphHandle g = share_graph(test::build_graph(4, test::path_edges(4), x));
  MeasureSpec spec;
  spec.elections = {{"e", "A", "B", 0, 1}};
  MeasureEvaluator m(g, 3, spec);
  m.evaluate(Plan(g, 3, {0, 1, 2, 2}));
  EXPECT_EQ(scalar(m, "election.e.seats.A"), 1.0);
  EXPECT_EQ(scalar(m, "election.e.seats.B"), 1.0);
  EXPECT_NEAR(scalar(m, "election.e.efficiency_gap"), -0.1, 1e-15);
  for (const char* name : {"mean_median", "partisan_bias", "declination", "competitive_districts"})
    EXPECT_TRUE(std::isnan(scalar(m, std::string("election.e.") + name))) << name;
  EXPECT_TRUE(std::isnan(m.sorted_vector(0)[2]));
  EXPECT_EQ(m.sorted_vector(0)[0], 2.0 / 6.0);
  EXPECT_EQ(m.sorted_vector(0)[1], 0.75);
}

// 4 x 4 grid, counties the four 2 x 2 blocks; municipalities: m0 = the top row, m1 = unit 15,
// the rest in none. Counted by hand for vertical stripes.
TEST(MeasureEvaluator, CountyAndMunicipalitySplits) {
  test::GraphExtras x;
  x.county = test::block_codes(4, 4, 2, 2);
  x.municipality.assign(16, UnitCodes::kNone);
  for (UnitIndex u = 0; u < 4; ++u) x.municipality[u] = 0;
  x.municipality[15] = 1;
  const GraphHandle g = share_graph(test::grid(4, 4, x));
  const MeasureSpec spec = default_measure_spec(*g);
  EXPECT_TRUE(spec.county_splits && spec.municipality_splits);
  MeasureEvaluator two(g, 2, spec), four(g, 4, spec);
  // Two stripes of width 2: no county split, 4 pieces; m0 split in 2, m1 whole: 1 split, 3 pieces.
  two.evaluate(Plan(g, 2, test::stripe_assignment(4, 4, 2)));
  EXPECT_EQ(scalar(two, "splits.counties_split"), 0.0);
  EXPECT_EQ(scalar(two, "splits.county_pieces"), 4.0);
  EXPECT_EQ(scalar(two, "splits.municipalities_split"), 1.0);
  EXPECT_EQ(scalar(two, "splits.municipality_pieces"), 3.0);
  // Four stripes: every county in 2 pieces (4 split, 8 pieces); m0 in 4 pieces, m1 in 1.
  four.evaluate(Plan(g, 4, test::stripe_assignment(4, 4, 4)));
  EXPECT_EQ(scalar(four, "splits.counties_split"), 4.0);
  EXPECT_EQ(scalar(four, "splits.county_pieces"), 8.0);
  EXPECT_EQ(scalar(four, "splits.municipalities_split"), 1.0);
  EXPECT_EQ(scalar(four, "splits.municipality_pieces"), 5.0);
}

// The chain's tallies (kept by RuleTracker as units move) give what a recount gives, and the
// evaluator allocates nothing once built, with or without them.
TEST(MeasureEvaluator, TrackedTalliesMatchARecountAndNothingIsAllocated) {
  test::GraphExtras x = unit_squares(6, 6);
  x.county = test::block_codes(6, 6, 3, 2);
  x.municipality.assign(36, UnitCodes::kNone);
  for (UnitIndex u = 0; u < 36; ++u)
    if (u % 5 != 0) x.municipality[u] = (u / 7) % 4;
  std::vector<double> votes(36), other(36);
  for (UnitIndex u = 0; u < 36; ++u) votes[u] = 1 + u % 7, other[u] = 1 + u % 5;
  x.counts = {{"a", votes}, {"b", other}, {"g", other}};
  x.groups = {2};
  const GraphHandle g = share_graph(test::grid(6, 6, x));
  Plan plan(g, 3, test::stripe_assignment(6, 6, 3));
  RuleSet rules;
  rules.population_tolerance = 0.9;
  RuleTracker tracker(plan, rules);
  MeasureSpec spec = default_measure_spec(*g);
  spec.elections = {{"e", "A", "B", 0, 1}};
  MeasureEvaluator tracked(g, 3, spec), recount(g, 3, spec);
  Rng rng = make_stream(5, 5);
  for (int step = 0; step < 2000; ++step) {
    tracker.move(plan, static_cast<UnitIndex>(rng() % 36), static_cast<DistrictIndex>(rng() % 3));
    const std::size_t before = test::allocations();
    tracked.evaluate(plan, {&tracker.county_tally(), &tracker.municipality_tally()});
    recount.evaluate(plan);
    ASSERT_EQ(test::allocations(), before);
    for (std::size_t i = 0; i < tracked.scalars().size(); ++i) {
      const double t = tracked.scalars()[i], r = recount.scalars()[i];
      ASSERT_TRUE(t == r || (std::isnan(t) && std::isnan(r))) << tracked.scalar_names()[i] << " at step " << step;
    }
  }
  ASSERT_TRUE(plan.tallies_consistent());
  const SplitTally fresh(plan, g->municipalities());
  EXPECT_EQ(tracker.municipality_tally().split(), fresh.split());
  EXPECT_EQ(tracker.municipality_tally().pieces(), fresh.pieces());
}

// The evaluator mends its sorted vectors when few districts changed since the last plan: after
// moves of one unit, moves of several and jumps to unrelated plans (empty districts among them,
// whose shares are NaN), every vector and scalar equals, bit for bit, a fresh evaluator's sort.
TEST(MeasureEvaluator, MendedSortedVectorsEqualAFreshSort) {
  test::GraphExtras x = unit_squares(6, 6);
  std::vector<double> votes(36), other(36), group(36);
  for (UnitIndex u = 0; u < 36; ++u) votes[u] = 1 + u % 7, other[u] = 1 + u % 5, group[u] = u % 3;
  x.counts = {{"a", votes}, {"b", other}, {"g", group}};
  x.groups = {2};
  const GraphHandle g = share_graph(test::grid(6, 6, x));
  constexpr std::size_t kDistricts = 12;
  MeasureSpec spec = default_measure_spec(*g);
  spec.elections = {{"e", "A", "B", 0, 1}};
  MeasureEvaluator mended(g, kDistricts, spec);
  Rng rng = make_stream(8, 8);
  std::vector<DistrictIndex> labels(36);
  for (UnitIndex u = 0; u < 36; ++u) labels[u] = static_cast<DistrictIndex>(u % kDistricts);
  std::size_t with_nan = 0;
  for (int step = 0; step < 3000; ++step) {
    const std::uint64_t kind = rng() % 10;
    const std::size_t moves = kind < 6 ? 1 : kind < 9 ? 1 + rng() % 6 : 36;  // 36: a jump
    for (std::size_t i = 0; i < moves; ++i)
      labels[rng() % 36] = static_cast<DistrictIndex>(rng() % kDistricts);
    const Plan plan(g, kDistricts, labels);
    mended.evaluate(plan);
    MeasureEvaluator fresh(g, kDistricts, spec);
    fresh.evaluate(plan);
    const auto same = [](double a, double b) { return std::bit_cast<std::uint64_t>(a) == std::bit_cast<std::uint64_t>(b); };
    for (std::size_t v = 0; v < mended.vector_names().size(); ++v)
      for (std::size_t j = 0; j < kDistricts; ++j)
        ASSERT_TRUE(same(mended.sorted_vector(v)[j], fresh.sorted_vector(v)[j]))
            << mended.vector_names()[v] << " position " << j << " at step " << step;
    for (std::size_t i = 0; i < mended.scalars().size(); ++i)
      ASSERT_TRUE(same(mended.scalars()[i], fresh.scalars()[i])) << mended.scalar_names()[i] << " at step " << step;
    with_nan += std::isnan(mended.sorted_vector(0)[kDistricts - 1]);
  }
  EXPECT_GT(with_nan, 100u);  // empty districts (NaN shares) were among the plans mended
}

TEST(MeasureEvaluator, NamesInOrderAndSpecsThatDoNotFit) {
  test::GraphExtras x;
  x.counts = {{"a", {1, 2, 3, 4}}, {"b", {4, 3, 2, 1}}};
  const GraphHandle g = share_graph(test::build_graph(4, test::path_edges(4), x));
  MeasureSpec spec;
  spec.elections = {{"gov", "A", "B", 0, 1}};
  spec.groups = {{"a", 0, 1, {0.5, 0.375}}};
  EXPECT_EQ(MeasureEvaluator(g, 2, spec).scalar_names(),
            (std::vector<std::string>{"election.gov.seats.A", "election.gov.seats.B", "election.gov.efficiency_gap",
                                      "election.gov.mean_median", "election.gov.partisan_bias",
                                      "election.gov.declination", "election.gov.competitive_districts",
                                      "group.a.districts_above_0.5", "group.a.districts_above_0.375",
                                      "compactness.cut_edges", "compactness.polsby_popper_min",
                                      "compactness.polsby_popper_mean", "population.max_deviation",
                                      "population.overall_range"}));
  MeasureSpec bad = spec;
  bad.elections[0].votes_b = 2;
  EXPECT_THROW(MeasureEvaluator(g, 2, bad), std::invalid_argument);
  bad = spec;
  bad.county_splits = true;
  EXPECT_THROW(MeasureEvaluator(g, 2, bad), std::invalid_argument);
  bad = spec;
  bad.competitive_low = 0.6, bad.competitive_high = 0.4;
  EXPECT_THROW(MeasureEvaluator(g, 2, bad), std::invalid_argument);
  bad = spec;
  bad.groups.push_back(bad.groups[0]);
  EXPECT_THROW(MeasureEvaluator(g, 2, bad), std::invalid_argument);
}

}  // namespace
}  // namespace planmill
