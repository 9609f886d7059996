// The compared plan in the ensemble (compare::compare_plan_with_run: ordered-district charts,
// histograms, the plain-language summary) and the maps of the compared plan and of one ensemble
// plan on the units' shapes (the job's map.geometry).
#include <cmath>

#include "planmill/base/error.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/report/svg.hpp"
#include "planmill/report/unit_shapes.hpp"
#include "planmill/seed/plan_csv.hpp"
#include "report/sections.hpp"

namespace planmill::report {
namespace {

std::string num(double v) { return format_number(v, 4); }
std::string percent(double share) { return std::isfinite(share) ? format_number(100 * share, 3) + "%" : ""; }

}  // namespace

Section plan_section(const RunFacts& f, std::vector<Figure>& figures) {
  const compare::CompareReport& c = *f.comparison;
  Section s{"plan", "The compared plan in the ensemble", {}};
  s.body += paragraph("Plan " + c.plan_file + " against " + std::to_string(c.chains.size()) + " chains of " +
                      std::to_string(c.draws) + " records each (the records the verdict judges).");
  if (!c.verdict_pass)
    s.body += paragraph("WARNING: the ensemble has not passed its convergence verdict, so where the plan stands in "
                        "it may change with a longer run.", "verdict");
  for (const auto& w : c.warnings) s.body += paragraph("Warning: " + w, "note");
  if (!c.not_stored.empty()) {
    std::string list;
    for (const auto& n : c.not_stored) list += (list.empty() ? "" : ", ") + n;
    s.body += paragraph("Not stored by the run, so not compared: " + list + ".", "note");
  }
  s.body += "<h3>Summary</h3>\n";
  for (const auto& line : compare::summary(c)) s.body += paragraph(line);

  if (!c.vectors.empty()) s.body += "<h3>Ordered districts</h3>\n";
  for (const auto& v : c.vectors) {
    Figure fig = ordered_district_figure(v);
    s.body += figure_html(fig);
    figures.push_back(std::move(fig));
  }

  std::vector<std::vector<std::string>> rows;
  for (const auto& x : c.scalars)
    rows.push_back({x.name, num(x.plan), percent(x.below), percent(x.equal), percent(x.above),
                    x.beyond_every_draw ? "below " + percent(x.bound) : percent(x.beyond), num(x.ess),
                    num(x.percentiles[1]), num(x.percentiles[3]), num(x.percentiles[5])});
  s.body += "<h3>Scalar measures</h3>\n";
  s.body += table({"measure", "plan", "below", "equal", "above", "at or beyond", "ESS", "2.5%", "median", "97.5%"}, rows,
                  "Shares of the ensemble's draws; 'at or beyond' is on the plan's tail, a bound when the plan lies "
                  "beyond every draw (docs/compare.md)");
  std::vector<double> pooled;
  for (const auto& x : c.scalars) {
    const auto it = f.draws.find(x.name);
    if (it == f.draws.end()) continue;
    pooled.clear();
    for (const auto& chain : it->second) pooled.insert(pooled.end(), chain.begin(), chain.end());
    Figure fig = histogram_figure(x, pooled);
    s.body += figure_html(fig);
    figures.push_back(std::move(fig));
  }
  s.body += paragraph(compare::caution(), "caution");
  return s;
}

Section maps_section(const RunFacts& f, std::vector<Figure>& figures, std::vector<std::string>& warnings) {
  Section s{"maps", "Maps", {}};
  if (f.job.map.geometry_path.empty()) {
    s.body += paragraph("The job names no geometry (map.geometry), so no map is drawn.");
    return s;
  }
  const GraphHandle graph = share_graph(load_unit_graph(f.job.map));
  if (graph->unit_count() != f.reader->unit_count()) {
    s.body += paragraph("The map's unit table now has " + std::to_string(graph->unit_count()) +
                        " units but the run's plans have " + std::to_string(f.reader->unit_count()) +
                        ", so no map is drawn.", "verdict");
    return s;
  }
  UnitShapes shapes;
  try {
    shapes = read_unit_shapes(f.job.map.geometry_path, *graph, f.job.map.id_column);
  } catch (const InputError& e) {
    // The rest of the report stands without maps; the reader is told why there are none.
    warnings.push_back(std::string("no maps: ") + e.what());
    s.body += paragraph("No map is drawn: " + std::string(e.what()), "verdict");
    return s;
  }
  const std::size_t k = f.reader->district_count();
  if (shapes.unknown_features > 0)
    s.body += paragraph(std::to_string(shapes.unknown_features) + " features of " + f.job.map.geometry_path +
                        " name no unit of the map and are not drawn.", "note");
  auto draw = [&](std::string_view name, const std::string& title, std::span<const DistrictIndex> plan) {
    std::vector<std::uint16_t> district(plan.begin(), plan.end());
    Figure fig = map_figure(name, title, shapes.shapes, district, k, graph->adjacency());
    s.body += figure_html(fig);
    figures.push_back(std::move(fig));
  };
  if (f.comparison) {
    const Plan plan = read_plan_csv(f.comparison->plan_file, graph, k);
    draw("map-compared-plan", "The compared plan", plan.assignment());
  }
  if (!f.diagnostics.chains.empty() && f.diagnostics.draws > 0) {
    const std::uint64_t chain = std::stoull(f.diagnostics.chains.front());
    const std::uint64_t record = f.reader->record_count(chain) - 1;
    const std::vector<DistrictIndex> plan = f.reader->read_plan(chain, record);
    draw("map-ensemble-plan", "One ensemble plan: chain " + std::to_string(chain) + ", record " + std::to_string(record),
         plan);
  }
  return s;
}

}  // namespace planmill::report
