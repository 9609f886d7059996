// The comparison as one HTML page: the settings, a band figure per measure, the axis tables.
#include <cmath>
#include <limits>

#include "planmill/report/figures.hpp"
#include "planmill/report/html.hpp"
#include "planmill/report/svg.hpp"
#include "planmill/run/run_state.hpp"
#include "sweep/blocks.hpp"

namespace planmill::sweep {
namespace {

using namespace report;

// Per setting (x: its index) the measure's median (a dot) and its 10-90% band (a bar); settings
// whose verdict did not pass are drawn hollow in the palette's second colour.
std::string band_figure(const SweepComparison& c, const std::string& measure) {
  Svg svg(640, 300, "Sweep: " + measure);
  double lo = std::numeric_limits<double>::infinity(), hi = -lo;
  for (const SettingSummary& s : c.settings)
    if (const MeasureBand* m = blocks::find(s, measure); m && m->draws > 0)
      lo = std::min(lo, m->low), hi = std::max(hi, m->high);
  if (lo > hi) lo = 0, hi = 1;
  const double n = static_cast<double>(c.settings.size());
  const Axes a = draw_axes(svg, {}, -0.5, n - 0.5, lo, hi, "setting", measure, true);
  const std::string pass(chain_colour(0)), fail(chain_colour(1));
  for (const SettingSummary& s : c.settings) {
    const MeasureBand* m = blocks::find(s, measure);
    if (!m || m->draws == 0) continue;
    const double x = a.x(static_cast<double>(s.setting.index));
    const std::string& colour = s.verdict == "pass" ? pass : fail;
    svg.line(x, a.y(m->low), x, a.y(m->high), stroke_style(colour, 3.0));
    svg.line(x - 5, a.y(m->low), x + 5, a.y(m->low), stroke_style(colour, 1.2));
    svg.line(x - 5, a.y(m->high), x + 5, a.y(m->high), stroke_style(colour, 1.2));
    svg.circle(x, a.y(m->median), 4.5, fill_style(s.verdict == "pass" ? colour : "#ffffff", colour, 1.6));
  }
  svg.circle(66, 14, 4.5, fill_style(pass, pass, 1.6));
  svg.text(76, 18, "verdict passed", 9.5);
  svg.circle(176, 14, 4.5, fill_style("#ffffff", fail, 1.6));
  svg.text(186, 18, "verdict not passed", 9.5);
  svg.text(300, 18, "dot: median; bar: 10th to 90th percentile", 9.5);
  return svg.str();
}

std::vector<std::string> setting_row(const SweepComparison& c, const SettingSummary& s) {
  std::vector<std::string> row = {std::to_string(s.setting.index)};
  for (std::size_t a = 0; a < c.folder.keys.size(); ++a)
    if (c.folder.axis_values[a].size() > 1) row.push_back(s.setting.values[a]);
  row.insert(row.end(), {s.status, s.verdict});
  return row;
}

}  // namespace

std::string comparison_html(const SweepComparison& c) {
  Document doc;
  doc.title = "Sweep comparison";
  doc.subtitle = "Sweep folder " + c.folder.dir + "; written " + utc_now_iso8601();

  Section settings{"settings", "Settings and their verdicts", {}};
  std::vector<std::string> header = {"setting"};
  std::string fixed;  // axes of one value: the same in every setting
  for (std::size_t a = 0; a < c.folder.keys.size(); ++a) {
    if (c.folder.axis_values[a].size() > 1) header.push_back(c.folder.keys[a]);
    else fixed += (fixed.empty() ? "" : ", ") + c.folder.keys[a] + " = " + c.folder.axis_values[a][0];
  }
  header.insert(header.end(), {"status", "verdict"});
  std::vector<std::vector<std::string>> rows;
  std::size_t failed = 0;
  for (const SettingSummary& s : c.settings) {
    rows.push_back(setting_row(c, s));
    failed += s.verdict != "pass";
  }
  if (failed > 0)
    settings.body += paragraph(std::to_string(failed) + " of " + std::to_string(c.settings.size()) +
                                   " settings have not passed their convergence verdict. Their bands may describe "
                                   "chains that have not mixed: a difference between settings may be the chains', "
                                   "not the rules'.",
                               "caution");
  settings.body += table(header, rows, "Each setting is the base job with these values; its run is in its folder.");
  if (!fixed.empty()) settings.body += paragraph("In every setting: " + fixed + ".", "note");
  for (const SettingSummary& s : c.settings)
    if (s.verdict != "pass") settings.body += paragraph("Setting " + std::to_string(s.setting.index) + ": " + s.verdict_line, "note");
  doc.sections.push_back(std::move(settings));

  Section figures{"figures", "Measures by setting", {}};
  figures.body += paragraph("For every setting (by its number, as in the table above), the median of each measure "
                            "over the records its verdict judges, and the band from the 10th to the 90th "
                            "percentile (type 7).", "note");
  for (const std::string& m : blocks::shown_measures(c, false))
    figures.body += figure(band_figure(c, m), m, "Median and 10-90% band of " + m + " per setting.");
  doc.sections.push_back(std::move(figures));

  const std::vector<std::string> measures = blocks::shown_measures(c, false);
  for (const blocks::AxisBlock& b : blocks::axis_blocks(c)) {
    const bool along = !c.folder.keys.empty() && c.folder.axis_values[b.axis].size() > 1;
    Section s{"axis-" + std::to_string(doc.sections.size()),
              along ? c.folder.keys[b.axis] + (b.held.empty() ? "" : ", with " + b.held) : "Every setting", {}};
    std::vector<std::string> head = {"measure"};
    for (std::size_t v = 0; v < b.columns.size(); ++v)
      head.push_back(along ? c.folder.axis_values[b.axis][v] : "setting " + std::to_string(b.columns[v]->setting.index));
    std::vector<std::vector<std::string>> body;
    for (const std::string& m : measures) {
      std::vector<std::string> row = {m};
      for (const SettingSummary* col : b.columns) row.push_back(col ? blocks::cell(blocks::find(*col, m)) : "-");
      body.push_back(std::move(row));
    }
    s.body = table(head, body, "median [10th, 90th percentile]");
    doc.sections.push_back(std::move(s));
  }
  return render_html(doc, Paper::a4);
}

}  // namespace planmill::sweep
