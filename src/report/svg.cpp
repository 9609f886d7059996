#include "planmill/report/svg.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

namespace planmill::report {

std::string escape_xml(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (const char c : text) {
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&#39;"; break;
      default:
        if (static_cast<unsigned char>(c) < 0x20 && c != '\t' && c != '\n') break;
        out += c;
    }
  }
  return out;
}

double LinearScale::operator()(double v) const {
  if (d1 == d0) return (r0 + r1) / 2;
  return r0 + (v - d0) / (d1 - d0) * (r1 - r0);
}

std::vector<double> nice_ticks(double lo, double hi, int count) {
  if (!std::isfinite(lo) || !std::isfinite(hi)) return {};
  if (hi < lo) std::swap(lo, hi);
  if (lo == hi) return {lo};
  const double rough = (hi - lo) / std::max(1, count);
  const double power = std::pow(10.0, std::floor(std::log10(rough)));
  double step = power;
  for (const double f : {1.0, 2.0, 5.0, 10.0}) {
    step = f * power;
    if (step >= rough) break;
  }
  const double first = std::floor(lo / step), last = std::ceil(hi / step);
  std::vector<double> ticks;
  for (double i = first; i <= last + 0.5; i += 1.0) {
    const double t = i * step;
    ticks.push_back(std::abs(t) < step * 1e-9 ? 0.0 : t);
  }
  return ticks;
}

std::string format_number(double v, int digits) {
  if (std::isnan(v)) return "NaN";
  if (std::isinf(v)) return v > 0 ? "Inf" : "-Inf";
  char buffer[40];
  std::snprintf(buffer, sizeof buffer, "%.*g", digits, v);
  std::string s = buffer;
  return s == "-0" ? "0" : s;
}

namespace {

// Coordinates with one decimal: a tenth of a user unit is below what any screen or printer shows.
std::string coord(double v) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.1f", v);
  std::string s = buffer;
  if (s.size() > 2 && s.compare(s.size() - 2, 2, ".0") == 0) s.resize(s.size() - 2);
  return s == "-0" ? "0" : s;
}

std::string style_attributes(const Style& s) {
  std::string a = " fill=\"" + escape_xml(s.fill) + "\"";
  if (!s.stroke.empty()) a += " stroke=\"" + escape_xml(s.stroke) + "\"";
  if (s.stroke_width > 0) a += " stroke-width=\"" + format_number(s.stroke_width, 3) + "\"";
  if (!s.dash.empty()) a += " stroke-dasharray=\"" + escape_xml(s.dash) + "\"";
  if (s.opacity != 1.0) a += " opacity=\"" + format_number(s.opacity, 3) + "\"";
  return a;
}

}  // namespace

Svg::Svg(double width, double height, std::string_view title)
    : width_(width), height_(height), title_(title) {}

void Svg::rect(double x, double y, double w, double h, const Style& style) {
  body_ += "<rect x=\"" + coord(x) + "\" y=\"" + coord(y) + "\" width=\"" + coord(std::max(0.0, w)) +
           "\" height=\"" + coord(std::max(0.0, h)) + "\"" + style_attributes(style) + "/>";
}

void Svg::line(double x1, double y1, double x2, double y2, const Style& style) {
  body_ += "<line x1=\"" + coord(x1) + "\" y1=\"" + coord(y1) + "\" x2=\"" + coord(x2) + "\" y2=\"" + coord(y2) +
           "\"" + style_attributes(style) + "/>";
}

void Svg::points_attribute(std::span<const std::pair<double, double>> points) {
  body_ += " points=\"";
  for (std::size_t i = 0; i < points.size(); ++i) {
    if (i != 0) body_ += ' ';
    body_ += coord(points[i].first) + "," + coord(points[i].second);
  }
  body_ += "\"";
}

void Svg::polyline(std::span<const std::pair<double, double>> points, const Style& style) {
  body_ += "<polyline";
  points_attribute(points);
  body_ += style_attributes(style) + "/>";
}

void Svg::polygon(std::span<const std::pair<double, double>> points, const Style& style) {
  body_ += "<polygon";
  points_attribute(points);
  body_ += style_attributes(style) + "/>";
}

void Svg::path(std::span<const std::vector<std::pair<double, double>>> pieces, bool closed, const Style& style) {
  body_ += "<path d=\"";
  for (const auto& piece : pieces) {
    for (std::size_t i = 0; i < piece.size(); ++i)
      body_ += (i == 0 ? "M" : "L") + coord(piece[i].first) + " " + coord(piece[i].second);
    if (closed && !piece.empty()) body_ += "Z";
  }
  body_ += "\" fill-rule=\"evenodd\"" + style_attributes(style) + "/>";
}

void Svg::circle(double cx, double cy, double r, const Style& style) {
  body_ += "<circle cx=\"" + coord(cx) + "\" cy=\"" + coord(cy) + "\" r=\"" + coord(r) + "\"" +
           style_attributes(style) + "/>";
}

void Svg::text(double x, double y, std::string_view text, double size, Anchor anchor, std::string_view fill,
               bool bold, double rotate) {
  static constexpr const char* kAnchor[] = {"start", "middle", "end"};
  body_ += "<text x=\"" + coord(x) + "\" y=\"" + coord(y) + "\" font-size=\"" + format_number(size, 3) +
           "\" text-anchor=\"" + kAnchor[static_cast<int>(anchor)] + "\" fill=\"" + escape_xml(fill) + "\"";
  if (bold) body_ += " font-weight=\"bold\"";
  if (rotate != 0.0)
    body_ += " transform=\"rotate(" + format_number(rotate, 4) + " " + coord(x) + " " + coord(y) + ")\"";
  body_ += ">" + escape_xml(text) + "</text>";
}

void Svg::begin_group(std::string_view css_class) {
  body_ += "<g class=\"" + escape_xml(css_class) + "\">";
  ++open_groups_;
}

void Svg::end_group() {
  if (open_groups_ == 0) return;
  body_ += "</g>";
  --open_groups_;
}

std::string Svg::str() const {
  std::string s = "<svg viewBox=\"0 0 " + coord(width_) + " " +
                  coord(height_) + "\" width=\"" + coord(width_) + "\" height=\"" + coord(height_) +
                  "\" font-family=\"system-ui, -apple-system, 'Segoe UI', 'Noto Sans', 'DejaVu Sans', "
                  "sans-serif\" role=\"img\"><title>" +
                  escape_xml(title_) + "</title>" + body_;
  for (int i = 0; i < open_groups_; ++i) s += "</g>";
  return s + "</svg>";
}

Axes draw_axes(Svg& svg, const Frame& f, double xlo, double xhi, double ylo, double yhi, std::string_view xlabel,
               std::string_view ylabel, bool x_integer) {
  std::vector<double> xt = nice_ticks(xlo, xhi, 6), yt = nice_ticks(ylo, yhi, 5);
  if (x_integer) std::erase_if(xt, [](double t) { return t != std::floor(t); });
  if (xt.empty()) xt = {xlo, xhi};
  if (yt.empty()) yt = {ylo, yhi};
  const double x0 = std::min(xt.front(), xlo), x1 = std::max(xt.back(), xhi);
  const double y0 = std::min(yt.front(), ylo), y1 = std::max(yt.back(), yhi);
  const double right = svg.width() - f.right, bottom = svg.height() - f.bottom;
  Axes a{{x0, x1, f.left, right}, {y0, y1, bottom, f.top}};
  const Style grid = stroke_style("#d9d9d9", 0.6);
  const Style axis = stroke_style("#444", 0.8);
  for (const double t : yt) {
    svg.line(f.left, a.y(t), right, a.y(t), grid);
    svg.text(f.left - 5, a.y(t) + 3.5, format_number(t), 10, Anchor::end, "#444");
  }
  for (const double t : xt) {
    svg.line(a.x(t), bottom, a.x(t), bottom + 4, axis);
    svg.text(a.x(t), bottom + 15, format_number(t), 10, Anchor::middle, "#444");
  }
  svg.line(f.left, bottom, right, bottom, axis);
  svg.line(f.left, f.top, f.left, bottom, axis);
  svg.text((f.left + right) / 2, svg.height() - 8, xlabel, 11, Anchor::middle, "#222");
  svg.text(14, (f.top + bottom) / 2, ylabel, 11, Anchor::middle, "#222", false, -90);
  return a;
}

std::string standalone_svg(std::string_view inline_svg) {
  if (inline_svg.substr(0, 4) != "<svg") return std::string(inline_svg);
  return "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\"" +
         std::string(inline_svg.substr(4)) + "\n";
}

}  // namespace planmill::report
