// The report's SVG writer and HTML pieces: escaping, scales, ticks, and that figures draw what
// their CSV holds.
#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <sstream>
#include <string>
#include <vector>

#include "planmill/report/figures.hpp"
#include "planmill/report/map_figure.hpp"
#include "planmill/report/html.hpp"
#include "planmill/report/svg.hpp"

namespace planmill::report {
namespace {

std::size_t count(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (std::size_t at = text.find(what); at != std::string::npos; at = text.find(what, at + what.size())) ++n;
  return n;
}

TEST(Svg, EscapesTheFiveXmlCharactersAndDropsControlCharacters) {
  EXPECT_EQ(escape_xml("a<b & \"c\" 'd'>"), "a&lt;b &amp; &quot;c&quot; &#39;d&#39;&gt;");
  EXPECT_EQ(escape_xml(std::string("x\x01y\tz\n", 6)), "xy\tz\n");
  EXPECT_EQ(escape_xml("plain"), "plain");
  // A title, a text and an attribute with markup in them stay text.
  Svg svg(100, 50, "</title><script>");
  svg.text(1, 2, "<b>&amp;</b>");
  svg.rect(0, 0, 1, 1, fill_style("\"><script>"));
  const std::string s = svg.str();
  EXPECT_EQ(s.find("<script"), std::string::npos) << s;
  EXPECT_NE(s.find("<title>&lt;/title&gt;&lt;script&gt;</title>"), std::string::npos) << s;
  EXPECT_NE(s.find("&lt;b&gt;&amp;amp;&lt;/b&gt;"), std::string::npos) << s;
  EXPECT_EQ(escape_html("<p>"), "&lt;p&gt;");
}

TEST(Svg, LinearScaleMapsEndsAndMiddleAndFlips) {
  const LinearScale y{0, 10, 200, 0};  // a y axis: larger values higher up
  EXPECT_DOUBLE_EQ(y(0), 200);
  EXPECT_DOUBLE_EQ(y(10), 0);
  EXPECT_DOUBLE_EQ(y(2.5), 150);
  EXPECT_DOUBLE_EQ(y(-5), 300);  // outside the domain, extrapolated
  const LinearScale flat{3, 3, 10, 20};
  EXPECT_DOUBLE_EQ(flat(3), 15);
}

TEST(Svg, NiceTicksAreOneTwoOrFiveTimesAPowerOfTenAndCoverTheRange) {
  // Worked by hand: (0.37 - 0.12) / 5 = 0.05, a step of 5e-2 from 0.10 to 0.40.
  const std::vector<double> t = nice_ticks(0.12, 0.37, 5);
  ASSERT_EQ(t.size(), 7u);
  EXPECT_NEAR(t.front(), 0.10, 1e-12);
  EXPECT_NEAR(t.back(), 0.40, 1e-12);
  EXPECT_NEAR(t[1] - t[0], 0.05, 1e-12);
  // 0..1000 in about 6 steps: rough 166.7 -> 200.
  const std::vector<double> u = nice_ticks(0, 1000, 6);
  EXPECT_EQ(u, (std::vector<double>{0, 200, 400, 600, 800, 1000}));
  // Negative to positive keeps an exact zero.
  const std::vector<double> v = nice_ticks(-0.3, 0.3, 4);
  EXPECT_NE(std::find(v.begin(), v.end(), 0.0), v.end());
  EXPECT_EQ(nice_ticks(2, 2, 5), std::vector<double>{2});
  EXPECT_TRUE(nice_ticks(0, std::numeric_limits<double>::quiet_NaN(), 5).empty());
}

TEST(Svg, NumbersAndCoordinatesAreShort) {
  EXPECT_EQ(format_number(0.1234567), "0.1235");
  EXPECT_EQ(format_number(-0.0), "0");
  EXPECT_EQ(format_number(std::nan("")), "NaN");
  Svg svg(10, 10, "t");
  svg.line(1.04, 2.0, 3.15, -0.04, stroke_style("#000", 1));
  EXPECT_NE(svg.str().find("x1=\"1\" y1=\"2\" x2=\"3.1\" y2=\"0\""), std::string::npos) << svg.str();
}

TEST(Svg, InlineSvgHasNoNamespaceAndTheStandaloneOneHasIt) {
  Svg svg(10, 10, "t");
  svg.begin_group("plot");  // left open: str() closes it
  const std::string s = svg.str();
  EXPECT_EQ(s.find("http"), std::string::npos);
  EXPECT_EQ(count(s, "<g "), count(s, "</g>"));
  const std::string file = standalone_svg(s);
  EXPECT_EQ(file.rfind("<?xml", 0), 0u);
  EXPECT_NE(file.find("<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox"), std::string::npos);
}

TEST(Figures, ATraceIsThinnedToTheBoundAndItsCsvHoldsWhatIsDrawn) {
  std::vector<std::vector<double>> chains(2, std::vector<double>(1000));
  for (std::size_t d = 0; d < 1000; ++d) chains[0][d] = static_cast<double>(d), chains[1][d] = 1000.0 - static_cast<double>(d);
  const std::vector<std::string> labels{"0", "1"};
  const Figure f = trace_figure("x", labels, chains, 100);
  // ceil(1000 / 100) = 10: draws 0, 10, ..., 990 of each chain, plus the header.
  EXPECT_EQ(count(f.csv, "\n"), 1u + 2 * 100);
  EXPECT_NE(f.csv.find("0,990,990\n"), std::string::npos);
  EXPECT_NE(f.csv.find("1,990,10\n"), std::string::npos);
  EXPECT_EQ(count(f.svg, "<polyline"), 2u);
  EXPECT_NE(f.caption.find("one record in every 10 of 1000"), std::string::npos) << f.caption;
}

TEST(Figures, AutocorrelationOfAnAlternatingChainIsMinusOneAtLagOne) {
  // x = +1, -1, +1, ...: mean 0, acov[1] / acov[0] = -(n - 1) / n (the biased estimator).
  std::vector<std::vector<double>> chains(1, std::vector<double>(10));
  for (std::size_t d = 0; d < 10; ++d) chains[0][d] = d % 2 == 0 ? 1.0 : -1.0;
  const std::vector<std::string> labels{"a"};
  const Figure f = autocorrelation_figure("x", labels, chains, 3);
  EXPECT_NE(f.csv.find("a,0,1\n"), std::string::npos) << f.csv;
  EXPECT_NE(f.csv.find("a,1,-0.9\n"), std::string::npos) << f.csv;
  EXPECT_NE(f.csv.find("a,2,0.8\n"), std::string::npos) << f.csv;
}

TEST(Figures, AHistogramOfWholeNumbersHasOneBarPerValueAndMarksThePlan) {
  compare::ScalarComparison s;
  s.name = "seats";
  s.plan = 3;
  s.below = 0.5, s.equal = 0.25, s.above = 0.25;
  s.finite = 4;
  const std::vector<double> draws{1, 2, 3, 4};
  const Figure f = histogram_figure(s, draws);
  EXPECT_NE(f.csv.find("0.5,1.5,1\n"), std::string::npos) << f.csv;
  EXPECT_NE(f.csv.find("3.5,4.5,1\n"), std::string::npos) << f.csv;
  EXPECT_EQ(count(f.svg, "<rect"), 4u);
  EXPECT_NE(f.svg.find("plan 3: 50% of draws below, 25% equal"), std::string::npos);
}

TEST(Figures, TheOrderedDistrictChartDrawsABoxPerPositionAndFillsThePlanOutside95) {
  compare::VectorComparison v;
  v.name = "election.gov.sorted_shares";
  for (int j = 0; j < 3; ++j) {
    compare::PositionComparison p;
    p.percentiles = {0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7};
    p.plan = j == 2 ? 0.65 : 0.4;
    p.outside95 = j == 2;
    v.positions.push_back(p);
  }
  const Figure f = ordered_district_figure(v);
  EXPECT_EQ(count(f.csv, "\n"), 4u);
  EXPECT_NE(f.csv.find("3,0.2,0.3,0.4,0.5,0.6,0.65,1,0\n"), std::string::npos) << f.csv;
  EXPECT_NE(f.caption.find("1 of 3 positions lie outside"), std::string::npos);
  // Three plan diamonds and two legend diamonds; one plan diamond and one legend diamond filled black.
  EXPECT_EQ(count(f.svg, "<polygon"), 5u);
  EXPECT_EQ(count(f.svg, "<polygon points") - count(f.svg, "fill=\"#ffffff\" stroke=\"#000000\""), 2u);
}

TEST(Figures, AMapFillsEachUnitByDistrictLabelsDistrictsAndDropsInvisiblePoints) {
  // Two units side by side, the second traced with extra points, and a third unit without a shape.
  // The map is 2 x 1 map units drawn 540 user units wide: 270 user units per map unit. Along the
  // bottom edge 100 points 1/100 apart (2.7 user units) all stay; up the right edge 1000 points
  // 1/1000 apart (0.27) stay only every other one, as each is within 0.5 of the last kept.
  std::vector<std::vector<Shape>> shapes(3);
  shapes[0] = {{{{0, 0}, {1, 0}, {1, 1}, {0, 1}, {0, 0}}}};
  Ring dense{{1, 0}};
  for (int i = 1; i <= 100; ++i) dense.emplace_back(1 + i / 100.0, 0);
  for (int i = 1; i <= 1000; ++i) dense.emplace_back(2, i / 1000.0);
  dense.insert(dense.end(), {{1, 1}, {1, 0}});
  shapes[1] = {{dense}};
  const std::vector<std::uint16_t> district{0, 1, 1};
  const Figure f = map_figure("map-x", "Map", shapes, district, 2);
  EXPECT_EQ(count(f.svg, "<path"), 3u);  // two fills and the outlines
  EXPECT_EQ(f.csv, "unit_index,district\n0,1\n1,2\n2,2\n");
  EXPECT_NE(f.caption.find("1 units have no shape"), std::string::npos) << f.caption;
  EXPECT_NE(f.svg.find(">1</text>"), std::string::npos);
  EXPECT_NE(f.svg.find(">2</text>"), std::string::npos);
  // The second fill: 1 + 100 + 500 + 2 points, one "M" or "L" each.
  const std::string second = f.svg.substr(f.svg.find("<path", f.svg.find("<path") + 1));
  const std::string fill = second.substr(0, second.find("/>"));
  EXPECT_EQ(count(fill, "L") + count(fill, "M"), 603u);
}

// The total length, in user units, of the pieces of the outline path ("M x y L x y ...").
double outline_length(const std::string& svg) {
  const std::size_t g = svg.find("district-outlines");
  const std::size_t d = svg.find(" d=\"", g) + 4;
  std::istringstream in(svg.substr(d, svg.find('"', d) - d));
  double length = 0, x = 0, y = 0;
  char op = 0;
  while (in >> op) {
    double nx = 0, ny = 0;
    in >> nx >> ny;
    if (op == 'L') length += std::hypot(nx - x, ny - y);
    x = nx, y = ny;
  }
  return length;
}

TEST(Figures, AMapOutlinesDistrictsAlongTheirBoundariesAndTheMapsEdgeOnly) {
  // A 2 x 2 block of unit squares, left column district 1, right column district 2: outlines are
  // the outer edge (8) and the middle line (2), not the seams inside a district; 270 user units
  // per map unit, so 2,700 in all (a worked example).
  std::vector<std::vector<Shape>> shapes(4);
  const auto square = [](double x, double y) {
    return std::vector<Shape>{{{{x, y}, {x + 1, y}, {x + 1, y + 1}, {x, y + 1}, {x, y}}}};
  };
  shapes[0] = square(0, 0), shapes[1] = square(1, 0), shapes[2] = square(0, 1), shapes[3] = square(1, 1);
  const std::vector<std::uint16_t> district{0, 1, 0, 1};
  EXPECT_NEAR(outline_length(map_figure("m", "M", shapes, district, 2).svg), 2700.0, 1e-6);
  // One district: only the outer edge.
  EXPECT_NEAR(outline_length(map_figure("m", "M", shapes, std::vector<std::uint16_t>{0, 0, 0, 0}, 1).svg), 2160.0, 1e-6);
  // Four districts: every edge, shared ones once: 12 unit edges.
  EXPECT_NEAR(outline_length(map_figure("m", "M", shapes, std::vector<std::uint16_t>{0, 1, 2, 3}, 4).svg), 3240.0, 1e-6);
}

TEST(Figures, AMapMatchesABoundaryTracedWithMoreVerticesOnOneSide) {
  // A 2 x 2 unit beside two unit squares stacked on its right (x 2..3): its right edge is one
  // segment, theirs are two. Districts: the big one and the lower square 1, the upper square 2.
  // Outlines: the outer edge (10) and the upper square's left and lower edges (1 + 1), 12 map
  // units at 180 user units each (a worked example). Without the adjacency the big unit's right
  // edge and the squares' left edges all show (15).
  std::vector<std::vector<Shape>> shapes(3);
  shapes[0] = {{{{0, 0}, {2, 0}, {2, 2}, {0, 2}, {0, 0}}}};
  shapes[1] = {{{{2, 0}, {3, 0}, {3, 1}, {2, 1}, {2, 0}}}};
  shapes[2] = {{{{2, 1}, {3, 1}, {3, 2}, {2, 2}, {2, 1}}}};
  const std::vector<std::uint16_t> district{0, 0, 1};
  const std::vector<AdjacencyView::Offset> offsets{0, 2, 4, 6};
  const std::vector<AdjacencyView::Vertex> targets{1, 2, 0, 2, 0, 1};
  const AdjacencyView adjacency(offsets, targets);
  EXPECT_NEAR(outline_length(map_figure("m", "M", shapes, district, 2, adjacency).svg), 12 * 180.0, 1e-6);
  EXPECT_NEAR(outline_length(map_figure("m", "M", shapes, district, 2).svg), 15 * 180.0, 1e-6);
  // All three in one district: the outer edge only.
  EXPECT_NEAR(outline_length(map_figure("m", "M", shapes, std::vector<std::uint16_t>{0, 0, 0}, 1, adjacency).svg),
              10 * 180.0, 1e-6);
}

TEST(Figures, AMapLeavesHolesOpen) {
  // A square with a square hole: one path of two pieces, filled by the even-odd rule; the hole's
  // edge is an outline (no unit fills it).
  std::vector<std::vector<Shape>> shapes(1);
  shapes[0] = {{{{0, 0}, {4, 0}, {4, 4}, {0, 4}, {0, 0}}, {{1, 1}, {1, 3}, {3, 3}, {3, 1}, {1, 1}}}};
  const Figure f = map_figure("m", "M", shapes, std::vector<std::uint16_t>{0}, 1);
  const std::string fill = f.svg.substr(f.svg.find("<path"), f.svg.find("/>", f.svg.find("<path")) - f.svg.find("<path"));
  EXPECT_EQ(count(fill, "M"), 2u);
  EXPECT_EQ(count(fill, "Z"), 2u);
  EXPECT_NE(fill.find("fill-rule=\"evenodd\""), std::string::npos);
  EXPECT_NEAR(outline_length(f.svg), (16 + 8) * 540.0 / 4, 1e-6);  // 135 user units per map unit
}

TEST(Html, TheDocumentIsSelfContainedAndPrintsOnTheChosenPaper) {
  Document d{"T <1>", "sub", {{"one", "First", paragraph("a & b")}, {"two", "Second", table({"h"}, {{"<x>"}})}}};
  const std::string a4 = render_html(d, Paper::a4), letter = render_html(d, Paper::letter);
  EXPECT_NE(a4.find("@page { size: A4;"), std::string::npos);
  EXPECT_NE(letter.find("@page { size: letter;"), std::string::npos);
  EXPECT_NE(a4.find("break-before: page"), std::string::npos);
  EXPECT_NE(a4.find("<title>T &lt;1&gt;</title>"), std::string::npos);
  EXPECT_NE(a4.find("<td>&lt;x&gt;</td>"), std::string::npos);
  for (const char* outside : {"http:", "https:", "//", "<script", "@import", "url("})
    EXPECT_EQ(a4.find(outside), std::string::npos) << outside;
}

}  // namespace
}  // namespace planmill::report
