#pragma once
// A small SVG writer of our own: figures are built as data (scales, ticks, shapes) and come out as
// one self-contained <svg> string. Text and attribute values are escaped; numbers are written
// with a bounded number of digits so that figures stay small. No fonts or images are referenced.
#include <cstddef>
#include <span>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace planmill::report {

// & < > " ' as entities; any other control character but tab and newline is dropped (XML 1.0
// cannot hold it).
[[nodiscard]] std::string escape_xml(std::string_view text);

// Maps [d0, d1] onto [r0, r1]; a zero-width domain maps everything to the middle of the range.
struct LinearScale {
  double d0 = 0.0, d1 = 1.0, r0 = 0.0, r1 = 1.0;
  [[nodiscard]] double operator()(double v) const;
};

// Tick values 1, 2 or 5 times a power of ten apart, about `count` of them, covering [lo, hi]
// (the first at or below lo, the last at or above hi). One tick for lo == hi; none for non-finite.
[[nodiscard]] std::vector<double> nice_ticks(double lo, double hi, int count);

// A number as short text: %.{digits}g, "-0" as "0", NaN as "NaN".
[[nodiscard]] std::string format_number(double v, int digits = 4);

// How a shape is drawn; empty strings are left out of the element.
struct Style {
  std::string fill = "none";
  std::string stroke;
  double stroke_width = 0.0;  // 0: not written
  std::string dash;           // stroke-dasharray
  double opacity = 1.0;       // 1: not written
};

[[nodiscard]] inline Style stroke_style(std::string colour, double width, std::string dash = {}, double opacity = 1.0) {
  Style s;
  s.stroke = std::move(colour), s.stroke_width = width, s.dash = std::move(dash), s.opacity = opacity;
  return s;
}
[[nodiscard]] inline Style fill_style(std::string fill, std::string stroke = {}, double width = 0.0) {
  Style s;
  s.fill = std::move(fill), s.stroke = std::move(stroke), s.stroke_width = width;
  return s;
}

enum class Anchor { start, middle, end };

class Svg {
 public:
  // width x height in user units (the viewBox); `title` becomes the <title> (escaped).
  Svg(double width, double height, std::string_view title);

  void rect(double x, double y, double w, double h, const Style& style);
  void line(double x1, double y1, double x2, double y2, const Style& style);
  void polyline(std::span<const std::pair<double, double>> points, const Style& style);
  void polygon(std::span<const std::pair<double, double>> points, const Style& style);
  // One <path> of several pieces, each a run of points (a ring closed with Z when `closed`);
  // filled with the even-odd rule, so that a polygon's holes (its later rings) stay open.
  void path(std::span<const std::vector<std::pair<double, double>>> pieces, bool closed, const Style& style);
  void circle(double cx, double cy, double r, const Style& style);
  void text(double x, double y, std::string_view text, double size = 11.0, Anchor anchor = Anchor::start,
            std::string_view fill = "#222", bool bold = false, double rotate = 0.0);
  // Opens and closes a group, e.g. to name the plot area (class is escaped).
  void begin_group(std::string_view css_class);
  void end_group();

  [[nodiscard]] double width() const noexcept { return width_; }
  [[nodiscard]] double height() const noexcept { return height_; }
  // The whole <svg> element, as it goes inline into HTML (no namespace attribute, which an
  // HTML parser supplies; standalone_svg() adds it for a file of its own).
  [[nodiscard]] std::string str() const;

 private:
  void points_attribute(std::span<const std::pair<double, double>> points);
  double width_, height_;
  std::string title_;
  std::string body_;
  int open_groups_ = 0;
};

// An inline <svg> as a file of its own: an XML declaration and the SVG namespace added.
[[nodiscard]] std::string standalone_svg(std::string_view inline_svg);

// The plot area of a chart and its two scales, with the axes, ticks and labels drawn.
struct Frame {
  double left = 58, top = 28, right = 16, bottom = 44;  // margins around the plot area
};
struct Axes {
  LinearScale x, y;
};
// Draws the frame's axes with nice ticks on [xlo, xhi] x [ylo, yhi] (the ranges are widened to
// the outer ticks) and returns the scales. x_integer: only whole-number ticks on x.
Axes draw_axes(Svg& svg, const Frame& frame, double xlo, double xhi, double ylo, double yhi,
               std::string_view xlabel, std::string_view ylabel, bool x_integer = false);

}  // namespace planmill::report
