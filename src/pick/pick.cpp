#include "planmill/pick/pick.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <numeric>
#include <set>
#include <sstream>

#include "planmill/base/error.hpp"
#include "planmill/compare/run_comparison.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/manifest/run_diagnostics.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/run/run_reader.hpp"
#include "planmill/seed/plan_csv.hpp"

namespace planmill::pick {
namespace {

struct Candidate {
  std::size_t chain_index, record;
  std::uint64_t chain;
};

// a before b under the aims: better value first, a NaN value last, then lower chain and record.
bool better(const Candidate& a, const Candidate& b, const std::vector<Aim>& aims,
            const std::vector<std::size_t>& columns, std::size_t width,
            const std::vector<std::vector<double>>& rows) {
  for (std::size_t i = 0; i < aims.size(); ++i) {
    const double x = rows[a.chain_index][a.record * width + columns[i]];
    const double y = rows[b.chain_index][b.record * width + columns[i]];
    if (std::isnan(x) || std::isnan(y)) {
      if (std::isnan(x) != std::isnan(y)) return std::isnan(y);
      continue;
    }
    if (x == y) continue;
    return aims[i].direction == Direction::most ? x > y : x < y;
  }
  return a.chain != b.chain ? a.chain < b.chain : a.record < b.record;
}

// Districts renumbered in order of first appearance, so that one partition has one form.
std::vector<DistrictIndex> canonical(const std::vector<DistrictIndex>& labels, std::size_t k) {
  std::vector<DistrictIndex> map(k, static_cast<DistrictIndex>(k));
  std::vector<DistrictIndex> out(labels.size());
  DistrictIndex next = 0;
  for (std::size_t u = 0; u < labels.size(); ++u) {
    DistrictIndex& m = map[labels[u]];
    if (m == static_cast<DistrictIndex>(k)) m = next++;
    out[u] = m;
  }
  return out;
}

}  // namespace

Aim parse_aim(std::string_view text) {
  Aim a;
  a.text = std::string(text);
  const std::size_t colon = text.find(':');
  const std::string_view word = text.substr(0, colon == std::string_view::npos ? 0 : colon);
  if (colon == std::string_view::npos || (word != "most" && word != "fewest") || colon + 1 == text.size())
    throw InputError({"--aim", 0, a.text}, "is not an aim 'most:OBSERVABLE' or 'fewest:OBSERVABLE'",
                     "write it as e.g. 'most:group.grp.districts_above_0.5'");
  a.direction = word == "most" ? Direction::most : Direction::fewest;
  a.name = std::string(text.substr(colon + 1));
  return a;
}

PickResult pick_plans(const PickOptions& o) {
  namespace fs = std::filesystem;
  if (!fs::is_directory(o.run_dir))
    throw InputError({o.run_dir, 0, {}}, "is not a folder", "give the run folder that 'planmill run' wrote");
  if (o.aims.empty()) throw InputError({"--aim", 0, {}}, "no aim given", "give at least one --aim most:NAME");
  const RunReader reader(o.run_dir);
  const std::vector<std::string>& stored = reader.observable_names();
  std::vector<compare::RecordFilter> as_filters;  // the aims' names, checked as filters' are
  for (const Aim& a : o.aims) as_filters.push_back({a.text, a.name});
  compare::check_filter_names(as_filters, stored, o.run_dir, "--aim");
  compare::check_filter_names(o.filters, stored, o.run_dir);

  const RunVerdictRule rule = verdict_rule_of_run(reader);
  RunDiagnosticsOptions options;
  options.dropped_records = o.dropped_records;
  const RunDiagnostics d = diagnose_run(reader, rule.rule, options);
  if (d.chains.empty() || d.draws == 0)
    throw InputError({o.run_dir, 0, {}}, "has no chain with records to pick from",
                     "run the job longer, or check it with 'planmill diagnose'");
  PickResult r;
  r.run_dir = o.run_dir;
  for (const Aim& a : o.aims) r.aims.push_back(a.text);
  r.chains = d.chains;
  r.verdict_pass = d.pass();
  std::ostringstream verdict;
  print_verdict(d, verdict);
  r.verdict_line = verdict.str();
  r.observables = stored;

  std::vector<std::uint64_t> chains;
  std::vector<std::vector<double>> rows;
  for (const std::string& c : d.chains) {
    chains.push_back(std::stoull(c));
    rows.push_back(reader.read_observables(chains.back()));
  }
  const compare::FilteredRecords kept = compare::filter_records(o.filters, stored, rows, d.dropped_records, d.draws);
  r.filters = kept.counts;
  r.filter_line = compare::describe_filters(kept);
  r.candidates = kept.kept_total;
  r.records_per_chain = kept.draws;
  if (kept.draws == 0)
    throw InputError({o.run_dir, 0, "--keep"}, "the filters leave some chain without records (" + r.filter_line + ")",
                     "loosen the filters");

  const std::size_t width = stored.size();
  std::vector<std::size_t> columns;
  for (const Aim& a : o.aims)
    columns.push_back(static_cast<std::size_t>(std::find(stored.begin(), stored.end(), a.name) - stored.begin()));
  std::vector<Candidate> order;
  for (std::size_t c = 0; c < chains.size(); ++c)
    for (const std::size_t record : kept.kept[c]) order.push_back({c, record, chains[c]});
  std::sort(order.begin(), order.end(), [&](const Candidate& a, const Candidate& b) {
    return better(a, b, o.aims, columns, width, rows);
  });

  std::vector<compare::ScalarTable> tables;
  for (std::size_t i = 0; i < width; ++i) tables.push_back(compare::kept_scalar_table(stored[i], i, width, rows, kept));
  const JobSpec job = compare::job_of_run(reader);
  const GraphHandle graph = share_graph(load_unit_graph(job.map));
  if (graph->unit_count() != reader.unit_count())
    throw InputError({job.map.units_path, 0, {}}, "has a different number of units than the run's plans",
                     "the map changed since the run; restore the map the run used");
  std::set<std::vector<DistrictIndex>> seen;
  for (const Candidate& c : order) {
    if (r.picks.size() == o.count) break;
    std::vector<DistrictIndex> labels = reader.read_plan(c.chain, c.record);
    if (!seen.insert(canonical(labels, reader.district_count())).second) {
      ++r.duplicates_skipped;
      continue;
    }
    Pick p;
    p.chain = c.chain;
    p.record = c.record;
    p.step = reader.record_steps(c.chain)[c.record];
    for (std::size_t i = 0; i < width; ++i) {
      p.values.push_back(rows[c.chain_index][c.record * width + i]);
      p.places.push_back(compare::compare_scalar(tables[i], p.values.back()));
    }
    p.plan_csv = plan_csv_text(Plan(graph, reader.district_count(), std::move(labels)));
    r.picks.push_back(std::move(p));
  }
  return r;
}

}  // namespace planmill::pick
