#include "planmill/report/run_report.hpp"

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>

#include "planmill/base/error.hpp"
#include "planmill/compare/run_comparison.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/report/svg.hpp"
#include "planmill/version.hpp"
#include "report/sections.hpp"

namespace planmill::report {
namespace {

namespace fs = std::filesystem;

std::string read_whole(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return {};
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

// The verdict's draws of the named observables: records [dropped, dropped + draws) of every
// diagnosed chain, read once per chain.
void read_draws(RunFacts& f, const std::set<std::string>& names) {
  const std::vector<std::string>& stored = f.reader->observable_names();
  const std::size_t first = f.diagnostics.dropped_records, n = f.diagnostics.draws;
  for (const std::string& c : f.diagnostics.chains) {
    const std::vector<double> rows = f.reader->read_observables(std::stoull(c));
    for (std::size_t col = 0; col < stored.size(); ++col) {
      if (names.count(stored[col]) == 0) continue;
      std::vector<double> chain(n);
      for (std::size_t d = 0; d < n; ++d) chain[d] = rows[(first + d) * stored.size() + col];
      f.draws[stored[col]].push_back(std::move(chain));
    }
  }
}

}  // namespace

std::string figure_html(const Figure& f) {
  return figure(f.svg, f.title, f.caption, "(--figures: " + f.slug + ".svg, .csv)");
}

Report build_report(const ReportOptions& o) {
  if (!fs::is_directory(o.run_dir))
    throw InputError({o.run_dir, 0, {}}, "is not a folder", "give the run folder that 'planmill run' wrote");
  const RunReader reader(o.run_dir);
  RunFacts f;
  f.reader = &reader;
  f.run_dir = o.run_dir;
  f.job = compare::job_of_run(reader);
  f.rule = verdict_rule_of_run(reader);
  RunDiagnosticsOptions how;
  const std::vector<ChainProblem> problems = reader.verify();
  how.problems = problems;
  how.judge = f.rule.judge;
  f.diagnostics = diagnose_run(reader, f.rule.rule, how);
  f.diagnostics.rule_source = f.rule.source;
  const fs::path manifest = reader.layout().manifest();
  if (!fs::exists(manifest)) {
    f.manifest_problem = "there is no manifest.json in the run folder ('planmill merge RUNDIR' writes one)";
  } else {
    nlohmann::json m = nlohmann::json::parse(read_whole(manifest), nullptr, false);
    if (m.is_discarded() || !m.is_object())
      f.manifest_problem = "manifest.json cannot be parsed; run 'planmill merge RUNDIR' again";
    else
      f.manifest = std::move(m);
  }
  if (!reader.state().measures_json.empty()) {
    nlohmann::json m = nlohmann::json::parse(reader.state().measures_json, nullptr, false);
    if (!m.is_discarded()) f.measures = std::move(m);
  }
  if (!o.plan_file.empty())
    f.comparison = compare::compare_plan_with_run({reader, problems, f.diagnostics},
                                                  {.run_dir = o.run_dir, .plan_file = o.plan_file});

  std::set<std::string> wanted;
  for (const auto& q : f.diagnostics.verdict().table)
    if (diagnose::judged_as(f.diagnostics.verdict(), q) != "not judged") wanted.insert(q.name);
  if (f.comparison)
    for (const auto& s : f.comparison->scalars) wanted.insert(s.name);
  read_draws(f, wanted);

  Report r;
  r.verdict_pass = f.diagnostics.pass();
  Document doc;
  doc.title = "Ensemble report: " + (reader.state().run_id.empty() ? o.run_dir : reader.state().run_id);
  doc.subtitle = "Run folder " + o.run_dir + (o.plan_file.empty() ? "" : "; compared plan " + o.plan_file) +
                 "; written " + utc_now_iso8601() + " by planmill " + kVersion;
  doc.sections.push_back(cautions_section(f));
  doc.sections.push_back(run_section(f));
  doc.sections.push_back(mixing_section(f, o, r.figures));
  if (Section s = ladder_section(f); !s.id.empty()) doc.sections.push_back(std::move(s));
  if (f.comparison) doc.sections.push_back(plan_section(f, r.figures));
  doc.sections.push_back(maps_section(f, r.figures, r.warnings));
  for (const auto& s : doc.sections) r.section_ids.push_back(s.id);
  r.html = render_html(doc, o.paper);
  return r;
}

std::vector<std::string> write_report(const Report& report, const std::string& out, const std::string& figures_dir) {
  std::vector<std::string> written;
  if (!figures_dir.empty()) {
    std::error_code ec;
    fs::create_directories(figures_dir, ec);
    if (ec) throw OutputError(figures_dir + ": cannot create the folder: " + ec.message());
    // Staged beside their places, then renamed in: a failure part way leaves the old files.
    std::vector<std::pair<fs::path, fs::path>> staged;
    for (const Figure& f : report.figures) {
      for (const auto& [ext, text] : {std::pair<std::string, std::string>{".svg", standalone_svg(f.svg)},
                                      std::pair<std::string, std::string>{".csv", f.csv}}) {
        const fs::path final_path = fs::path(figures_dir) / (f.slug + ext);
        const fs::path temp = fs::path(figures_dir) / ("." + f.slug + ext + ".staged");
        write_file_atomically(temp.string(), text);
        staged.emplace_back(temp, final_path);
      }
    }
    for (const auto& [temp, final_path] : staged) {
      fs::rename(temp, final_path, ec);
      if (ec) throw OutputError(final_path.string() + ": cannot be written: " + ec.message());
      written.push_back(final_path.string());
    }
  }
  write_file_atomically(out, report.html);
  written.push_back(out);
  return written;
}

}  // namespace planmill::report
