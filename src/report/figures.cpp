#include "planmill/report/figures.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <limits>

#include "planmill/diagnose/autocovariance.hpp"
#include "planmill/report/svg.hpp"

namespace planmill::report {
namespace {

// Okabe and Ito's colour-universal-design hues (Okabe & Ito 2008, "Color Universal Design"; the
// hex values from memory), in an order that alternates dark and light in greyscale.
constexpr std::array<std::string_view, 6> kChainColours{"#0072B2", "#D55E00", "#009E73",
                                                         "#CC79A7", "#E69F00", "#56B4E9"};
constexpr std::array<std::string_view, 4> kChainDashes{"", "6 3", "2 2", "8 3 2 3"};
// The same hues mixed 55% with white, for filling areas under dark text; then a light grey.
constexpr std::array<std::string_view, 8> kDistrictFills{"#8CB2D5", "#ECB78C", "#8CD3C0", "#E8C3D7",
                                                          "#F4D48C", "#B2DDF5", "#F7F3AA", "#C8C8C8"};

constexpr double kWidth = 640, kHeight = 300;

std::pair<double, double> finite_range(std::span<const std::vector<double>> chains) {
  double lo = std::numeric_limits<double>::infinity(), hi = -lo;
  for (const auto& c : chains)
    for (const double v : c)
      if (std::isfinite(v)) lo = std::min(lo, v), hi = std::max(hi, v);
  if (lo > hi) return {0.0, 1.0};
  if (lo == hi) return {lo - 0.5, hi + 0.5};
  return {lo, hi};
}

void chain_legend(Svg& svg, std::span<const std::string> labels, double x, double y) {
  for (std::size_t c = 0; c < labels.size() && c < 12; ++c) {
    const double lx = x + static_cast<double>(c) * 62;
    svg.line(lx, y, lx + 20, y,
             stroke_style(std::string(chain_colour(c)), 1.6, std::string(chain_dash(c))));
    svg.text(lx + 24, y + 3.5, "chain " + labels[c], 9.5, Anchor::start, "#333");
  }
  if (labels.size() > 12) svg.text(x + 12 * 62, y + 3.5, "...", 9.5);
}

// A file name stem: letters, digits, '.', '-' and '_' kept, anything else '_'.

}  // namespace

std::string figure_slug(std::string_view prefix, std::string_view name) {
  std::string s(prefix);
  for (const char c : name) s += (std::isalnum(static_cast<unsigned char>(c)) || c == '.' || c == '-' || c == '_') ? c : '_';
  return s;
}

std::string_view chain_colour(std::size_t chain) { return kChainColours[chain % kChainColours.size()]; }
std::string_view chain_dash(std::size_t chain) {
  return kChainDashes[(chain / kChainColours.size() + chain) % kChainDashes.size()];
}
std::string_view district_fill(std::size_t district) { return kDistrictFills[district % kDistrictFills.size()]; }

std::string csv_number(double v) { return std::isfinite(v) ? format_number(v, 10) : std::string(); }

std::string csv_text(std::string_view text) {
  if (text.find_first_of(",\"\n\r") == std::string_view::npos) return std::string(text);
  std::string out = "\"";
  for (const char c : text) out += c == '"' ? std::string("\"\"") : std::string(1, c);
  return out + "\"";
}

Figure trace_figure(std::string_view observable, std::span<const std::string> labels,
                    std::span<const std::vector<double>> chains, std::size_t max_points) {
  const std::size_t draws = chains.empty() ? 0 : chains.front().size();
  const std::size_t every = std::max<std::size_t>(1, (draws + max_points - 1) / std::max<std::size_t>(1, max_points));
  Figure f{figure_slug("trace-", observable), "Trace of " + std::string(observable), {}, {}, "chain,draw,value\n"};
  Svg svg(kWidth, kHeight, f.title);
  const auto [lo, hi] = finite_range(chains);
  const Axes a = draw_axes(svg, {}, 0, static_cast<double>(draws > 0 ? draws - 1 : 1), lo, hi,
                           "record (after burn-in and dropped records)", std::string(observable), true);
  std::vector<std::pair<double, double>> points;
  for (std::size_t c = 0; c < chains.size(); ++c) {
    points.clear();
    for (std::size_t d = 0; d < chains[c].size(); d += every) {
      const double v = chains[c][d];
      f.csv += csv_text(labels[c]) + "," + std::to_string(d) + "," + csv_number(v) + "\n";
      if (std::isfinite(v)) points.emplace_back(a.x(static_cast<double>(d)), a.y(v));
    }
    svg.polyline(points, stroke_style(std::string(chain_colour(c)), 1.0, std::string(chain_dash(c)), 0.85));
  }
  chain_legend(svg, labels, 60, 14);
  f.caption = "Each line is one chain's recorded values of " + std::string(observable) + ", " +
              (every == 1 ? std::string("every record") : "one record in every " + std::to_string(every)) +
              " of " + std::to_string(draws) + ". Chains that wander in separate bands, or drift, show poor mixing.";
  f.svg = svg.str();
  return f;
}

Figure autocorrelation_figure(std::string_view observable, std::span<const std::string> labels,
                              std::span<const std::vector<double>> chains, std::size_t max_lag) {
  Figure f{figure_slug("autocorrelation-", observable), "Autocorrelation of " + std::string(observable), {}, {},
           "chain,lag,autocorrelation\n"};
  Svg svg(kWidth, kHeight * 0.8, f.title);
  const std::size_t draws = chains.empty() ? 0 : chains.front().size();
  const std::size_t lags = std::min(max_lag, draws > 0 ? draws - 1 : 0);
  const Axes a = draw_axes(svg, {}, 0, static_cast<double>(std::max<std::size_t>(lags, 1)), -0.25, 1.0,
                           "lag (records)", "autocorrelation", true);
  svg.line(a.x.r0, a.y(0), a.x.r1, a.y(0), stroke_style("#444", 0.8));
  std::vector<std::pair<double, double>> points;
  for (std::size_t c = 0; c < chains.size(); ++c) {
    const std::vector<double> acov = diagnose::autocovariance(chains[c]);
    points.clear();
    if (acov.empty() || !(acov[0] > 0)) continue;  // constant or empty chain: no autocorrelation
    for (std::size_t t = 0; t <= lags && t < acov.size(); ++t) {
      const double rho = acov[t] / acov[0];
      f.csv += csv_text(labels[c]) + "," + std::to_string(t) + "," + csv_number(rho) + "\n";
      points.emplace_back(a.x(static_cast<double>(t)), a.y(std::clamp(rho, -0.25, 1.0)));
    }
    svg.polyline(points, stroke_style(std::string(chain_colour(c)), 1.2, std::string(chain_dash(c))));
  }
  chain_legend(svg, labels, 60, 14);
  f.caption = "Autocorrelation of each chain's records of " + std::string(observable) + " at lags 0 to " +
              std::to_string(lags) + " (values below -0.25 drawn at the edge). A slow fall means few "
                                      "effectively independent draws per record.";
  f.svg = svg.str();
  return f;
}

Figure ordered_district_figure(const compare::VectorComparison& v) {
  Figure f{figure_slug("ordered-", v.name), "Ordered districts: " + v.name, {}, {},
           "position,p2.5,p25,p50,p75,p97.5,plan,outside95,outside99\n"};
  const std::size_t k = v.positions.size();
  Svg svg(kWidth, kHeight + 40, f.title);
  double lo = std::numeric_limits<double>::infinity(), hi = -lo;
  for (const auto& p : v.positions)
    for (const double x : {p.percentiles[1], p.percentiles[5], p.plan})
      if (std::isfinite(x)) lo = std::min(lo, x), hi = std::max(hi, x);
  if (lo > hi) lo = 0, hi = 1;
  const Axes a = draw_axes(svg, {}, 0.5, static_cast<double>(k) + 0.5, lo, hi,
                           "district, sorted from lowest to highest share", "share", true);
  const double slot = (a.x.r1 - a.x.r0) / (a.x.d1 - a.x.d0);
  const double half = std::min(12.0, slot * 0.32);
  const Style whisker = stroke_style("#34495e", 1.0);
  for (std::size_t j = 0; j < k; ++j) {
    const auto& p = v.positions[j];
    const auto& q = p.percentiles;  // 0.5, 2.5, 25, 50, 75, 97.5, 99.5
    const double x = a.x(static_cast<double>(j + 1));
    f.csv += std::to_string(j + 1) + "," + csv_number(q[1]) + "," + csv_number(q[2]) + "," + csv_number(q[3]) + "," +
             csv_number(q[4]) + "," + csv_number(q[5]) + "," + csv_number(p.plan) + "," +
             (p.outside95 ? "1" : "0") + "," + (p.outside99 ? "1" : "0") + "\n";
    if (!std::isfinite(q[1])) continue;
    svg.line(x, a.y(q[1]), x, a.y(q[5]), whisker);
    svg.line(x - half / 2, a.y(q[1]), x + half / 2, a.y(q[1]), whisker);
    svg.line(x - half / 2, a.y(q[5]), x + half / 2, a.y(q[5]), whisker);
    svg.rect(x - half, a.y(q[4]), 2 * half, a.y(q[2]) - a.y(q[4]),
             fill_style(std::string(kEnsembleBox), "#34495e", 0.8));
    svg.line(x - half, a.y(q[3]), x + half, a.y(q[3]), stroke_style("#34495e", 1.6));
    if (!std::isfinite(p.plan)) continue;
    const double y = a.y(p.plan), r = std::min(5.0, half * 0.6 + 1.5);
    const std::vector<std::pair<double, double>> diamond{{x, y - r}, {x + r, y}, {x, y + r}, {x - r, y}};
    svg.polygon(diamond, fill_style(p.outside95 ? std::string(kPlanMark) : std::string("#ffffff"),
                                    std::string(kPlanMark), 1.3));
  }
  // Legend.
  svg.rect(60, 10, 14, 10, fill_style(std::string(kEnsembleBox), "#34495e", 0.8));
  svg.text(78, 19, "ensemble: box 25-75%, line median, whiskers 2.5-97.5%", 9.5);
  const std::vector<std::pair<double, double>> open{{380, 10}, {385, 15}, {380, 20}, {375, 15}};
  svg.polygon(open, fill_style("#ffffff", std::string(kPlanMark), 1.3));
  svg.text(390, 19, "plan", 9.5);
  const std::vector<std::pair<double, double>> full{{430, 10}, {435, 15}, {430, 20}, {425, 15}};
  svg.polygon(full, fill_style(std::string(kPlanMark), std::string(kPlanMark), 1.3));
  svg.text(440, 19, "plan, outside the central 95%", 9.5);
  std::size_t outside = 0;
  for (const auto& p : v.positions) outside += p.outside95 ? 1 : 0;
  f.caption = "For each of the " + std::to_string(k) + " positions (districts ordered by " + v.name +
              "), the ensemble's spread and the compared plan's value. " + std::to_string(outside) + " of " +
              std::to_string(k) + " positions lie outside the ensemble's central 95%.";
  f.svg = svg.str();
  return f;
}

Figure histogram_figure(const compare::ScalarComparison& s, std::span<const double> draws) {
  Figure f{figure_slug("histogram-", s.name), "Distribution of " + s.name, {}, {}, "bin_low,bin_high,draws\n"};
  double lo = std::numeric_limits<double>::infinity(), hi = -lo;
  bool whole = true;
  for (const double v : draws)
    if (std::isfinite(v)) {
      lo = std::min(lo, v), hi = std::max(hi, v);
      whole = whole && v == std::floor(v);
    }
  Svg svg(kWidth, kHeight, f.title);
  if (lo > hi) {
    svg.text(kWidth / 2, kHeight / 2, "no finite draws", 12, Anchor::middle);
    f.caption = "The ensemble has no finite value of " + s.name + ".";
    f.svg = svg.str();
    return f;
  }
  // Bins: one per whole number when there are at most 40 of them, else 40 equal bins.
  const bool per_value = whole && hi - lo <= 40;
  const std::size_t bins = per_value ? static_cast<std::size_t>(hi - lo) + 1 : 40;
  const double b0 = per_value ? lo - 0.5 : lo;
  const double width = per_value ? 1.0 : (hi > lo ? (hi - lo) / static_cast<double>(bins) : 1.0);
  std::vector<std::size_t> counts(bins, 0);
  for (const double v : draws)
    if (std::isfinite(v))
      ++counts[std::min(bins - 1, static_cast<std::size_t>(std::max(0.0, std::floor((v - b0) / width))))];
  const double top = static_cast<double>(*std::max_element(counts.begin(), counts.end()));
  double xlo = b0, xhi = b0 + width * static_cast<double>(bins);
  if (std::isfinite(s.plan)) xlo = std::min(xlo, s.plan), xhi = std::max(xhi, s.plan);
  const Axes a = draw_axes(svg, {}, xlo, xhi, 0, top, s.name, "draws");
  for (std::size_t i = 0; i < bins; ++i) {
    const double x0 = b0 + width * static_cast<double>(i);
    f.csv += csv_number(x0) + "," + csv_number(x0 + width) + "," + std::to_string(counts[i]) + "\n";
    svg.rect(a.x(x0), a.y(static_cast<double>(counts[i])), a.x(x0 + width) - a.x(x0) - 0.4,
             a.y(0) - a.y(static_cast<double>(counts[i])), fill_style(std::string(kEnsembleBox), "#34495e", 0.4));
  }
  if (std::isfinite(s.plan)) {
    const double x = a.x(s.plan);
    svg.line(x, a.y.r1 - 6, x, a.y.r0, stroke_style(std::string(kPlanMark), 2.0, "5 2"));
    const std::string label = "plan " + format_number(s.plan) + ": " + format_number(100 * s.below, 3) +
                              "% of draws below, " + format_number(100 * s.equal, 3) + "% equal";
    svg.text(std::clamp(x, 70.0, kWidth - 70.0), a.y.r1 - 9, label, 10, Anchor::middle, "#000", true);
    f.csv += "# plan," + csv_number(s.plan) + ",below " + csv_number(s.below) + " equal " + csv_number(s.equal) +
             " above " + csv_number(s.above) + "\n";
  }
  f.caption = "The ensemble's " + std::to_string(s.finite) + " finite draws of " + s.name +
              (per_value ? " (one bar per value)" : " (40 equal bins)") +
              (std::isfinite(s.plan) ? "; the dashed line is the compared plan." : "; the plan has no value.");
  f.svg = svg.str();
  return f;
}

}  // namespace planmill::report
