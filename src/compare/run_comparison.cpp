#include "planmill/compare/run_comparison.hpp"

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>

#include "planmill/base/error.hpp"
#include "planmill/compare/outlier_test.hpp"
#include "planmill/compare/record_filter.hpp"
#include "planmill/graph/load.hpp"
#include "planmill/job/job.hpp"
#include "planmill/job/job_measures.hpp"
#include "planmill/job/job_rules.hpp"
#include "planmill/manifest/run_diagnostics.hpp"
#include "planmill/measures/measures.hpp"
#include "planmill/moves/kernel.hpp"
#include "planmill/run/observables.hpp"
#include "planmill/seed/plan_csv.hpp"
#include "planmill/score/plan_values.hpp"
#include "planmill/score/score.hpp"
#include "planmill/seed/seed_plan.hpp"

namespace planmill::compare {
namespace {

namespace fs = std::filesystem;
using score::measure_plan;
using score::PlanValues;

}  // namespace

JobSpec job_of_run(const RunReader& reader) {
  const fs::path copy = reader.layout().job_copy();
  std::ifstream in(copy, std::ios::binary);
  if (!in)
    throw InputError({copy.string(), 0, ""}, "the run folder has no readable copy of its job, so its map is unknown",
                     "give a run folder written by 'planmill run'");
  std::ostringstream text;
  text << in.rdbuf();
  // Relative paths in the job are relative to the job file as it was given to `planmill run`.
  const std::string& given = reader.state().job_path;
  return parse_job_text(text.str(), given.empty() ? copy.string() : given);
}

std::vector<VectorTable> read_sorted_vectors(const RunReader& reader, const std::vector<std::uint64_t>& chains,
                                             std::size_t first, std::size_t draws, std::size_t positions,
                                             const std::vector<std::string>& names) {
  std::vector<std::vector<std::size_t>> records(chains.size());
  for (auto& r : records)
    for (std::size_t d = 0; d < draws; ++d) r.push_back(first + d);
  return read_sorted_vectors(reader, chains, records, positions, names);
}

std::vector<VectorTable> read_sorted_vectors(const RunReader& reader, const std::vector<std::uint64_t>& chains,
                                             const std::vector<std::vector<std::size_t>>& records,
                                             std::size_t positions, const std::vector<std::string>& names) {
  std::vector<VectorTable> tables;
  const std::vector<std::string>& stored = reader.sorted_names();
  const std::size_t draws = records.empty() ? 0 : records[0].size();
  for (const std::string& name : names) {
    if (std::find(stored.begin(), stored.end(), name) == stored.end()) continue;
    VectorTable t{name, std::vector<double>(chains.size() * draws * positions), draws, chains.size(), positions};
    for (std::size_t c = 0; c < chains.size(); ++c) {
      const std::vector<double> rows = reader.read_sorted(chains[c], name);  // records x positions
      for (std::size_t d = 0; d < draws; ++d)
        std::copy_n(rows.begin() + static_cast<std::ptrdiff_t>(records[c][d] * positions), positions,
                    t.values.begin() + static_cast<std::ptrdiff_t>((c * draws + d) * positions));
    }
    tables.push_back(std::move(t));
  }
  return tables;
}

CompareReport compare_plan_with_run(const CompareOptions& o) {
  if (!fs::is_directory(o.run_dir))
    throw InputError({o.run_dir, 0, {}}, "is not a folder", "give the run folder that 'planmill run' wrote");
  const RunReader reader(o.run_dir);
  check_filter_names(o.filters, reader.observable_names(), o.run_dir);
  const std::vector<ChainProblem> problems = reader.verify();
  const RunVerdictRule rule = verdict_rule_of_run(reader);
  const RunDiagnostics d = diagnose_run(
      reader, rule.rule, {.dropped_records = o.dropped_records, .problems = problems, .judge = rule.judge});
  return compare_plan_with_run({reader, problems, d}, o);
}

CompareReport compare_plan_with_run(const DiagnosedRun& run, const CompareOptions& o) {
  const RunReader& reader = run.reader;
  const std::vector<ChainProblem>& problems = run.problems;
  const RunDiagnostics& d = run.diagnostics;
  check_filter_names(o.filters, reader.observable_names(), o.run_dir);

  CompareReport r;
  r.run_dir = o.run_dir;
  r.plan_file = o.plan_file;
  r.burn_in_steps = reader.state().burn_in;
  r.dropped_records = d.dropped_records;
  r.draws = d.draws;
  r.chains = d.chains;
  r.records = d.records;
  r.verdict_pass = d.pass();
  std::ostringstream verdict;
  print_verdict(d, verdict);
  r.verdict_line = verdict.str();
  for (const auto& l : d.left_out) r.warnings.push_back("chain " + l.chain + " left out: " + l.why);
  for (const auto& n : d.notes) r.warnings.push_back(n);
  if (r.chains.empty() || r.draws == 0)
    throw InputError({o.run_dir, 0, {}}, "has no chain with records to compare with",
                     "run the job longer, or check it with 'planmill diagnose'");

  const JobSpec job = job_of_run(reader);
  std::vector<DeclaredMeasure> declared;  // a name may carry the tail of the ε-outlier test (":low", ":high")
  for (const std::string& entry : job.compare.declared) declared.push_back(parse_declared(entry, job.path));
  for (const DeclaredMeasure& entry : declared) r.declared.push_back(entry.name);
  LoadReport load;
  const GraphHandle graph = share_graph(load_unit_graph(job.map, &load));
  if (graph->unit_count() != reader.unit_count())
    throw InputError({job.map.units_path, 0, {}},
                     "has " + std::to_string(graph->unit_count()) + " units but the run's plans have " +
                         std::to_string(reader.unit_count()),
                     "the map changed since the run; restore the map the run used");
  score::ReadPlan reading;
  const Plan plan = score::read_plan(o.plan_file, o.crosswalk_file, graph, reader.district_count(), &reading);
  if (reading.carried) r.plan_reading = reading.describe(*graph);
  r.warnings.insert(r.warnings.end(), reading.warnings.begin(), reading.warnings.end());
  const RuleSet rules = resolve_rules(job, graph);
  try {
    check_seed_plan(plan, rules, o.plan_file);
  } catch (const std::exception& e) {
    r.warnings.push_back(std::string("the plan breaks a hard rule of the run, so the ensemble holds no plan like it: ") +
                         e.what());
  }
  {
    const double ideal = plan.ideal_population();
    std::int64_t low = plan.population(0), high = low;
    for (DistrictIndex district = 1; district < plan.district_count(); ++district) {
      low = std::min(low, plan.population(district));
      high = std::max(high, plan.population(district));
    }
    const double allowed = std::min(2.0 * rules.population_tolerance, rules.population_range_max.value_or(2.0));
    r.population_band = band_note(plan.max_population_deviation(), static_cast<double>(high - low) / ideal,
                                  rules.population_tolerance, allowed);
    if (!r.population_band.empty()) r.warnings.push_back(r.population_band);
  }
  const MeasureSpec measure_spec = make_measure_spec(job.measures, *graph);
  const PlanValues values = measure_plan(plan, graph, rules, measure_spec);
  r.outlier = outlier_test(reader, job, plan, problems, declared,
                           [&](const Plan& p) { return measure_plan(p, graph, rules, measure_spec).scalars; });

  std::vector<std::uint64_t> chains;
  for (const std::string& c : r.chains) chains.push_back(std::stoull(c));
  const std::vector<std::string>& stored = reader.observable_names();
  std::map<std::string, std::size_t> column;
  for (std::size_t i = 0; i < stored.size(); ++i) column.emplace(stored[i], i);
  std::vector<ScalarTable> tables;
  std::vector<double> plan_values;
  for (const std::string& name : values.scalar_order) {
    if (column.count(name) == 0) {
      r.not_stored.push_back(name);
      continue;
    }
    tables.push_back({name, std::vector<double>(r.draws * chains.size()), r.draws, chains.size()});
    plan_values.push_back(values.scalars.at(name));
  }
  for (const std::string& name : stored)
    if (values.scalars.count(name) == 0)
      r.warnings.push_back("the run stores '" + name + "', which compare cannot compute for a plan; it is not compared");
  // Filters (--keep) choose the records before any statistic (docs/pick.md).
  std::vector<std::vector<double>> rows;
  for (const std::uint64_t c : chains) rows.push_back(reader.read_observables(c));
  const FilteredRecords kept = filter_records(o.filters, stored, rows, r.dropped_records, r.draws);
  r.filters = kept.counts;
  r.filter_line = describe_filters(kept);
  r.draws = kept.draws;
  if (r.draws == 0)
    throw InputError({o.run_dir, 0, "--keep"}, "the filters leave some chain without records (" + r.filter_line + ")",
                     "loosen the filters");
  for (ScalarTable& t : tables) t = kept_scalar_table(t.name, column.at(t.name), stored.size(), rows, kept);
  for (std::size_t i = 0; i < tables.size(); ++i) r.scalars.push_back(compare_scalar(tables[i], plan_values[i]));

  const std::vector<VectorTable> vectors = read_sorted_vectors(reader, chains, used_records(kept),
                                                               reader.district_count(), values.vector_names);
  for (std::size_t v = 0; v < values.vector_names.size(); ++v) {
    const VectorTable* table = nullptr;
    for (const auto& t : vectors)
      if (t.name == values.vector_names[v]) table = &t;
    if (table == nullptr) {
      r.not_stored.push_back(values.vector_names[v]);
      continue;
    }
    r.vectors.push_back(compare_vector(*table, values.vectors[v]));
  }
  return r;
}

}  // namespace planmill::compare
