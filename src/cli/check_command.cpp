#include <cstdio>
#include <iostream>
#include <set>
#include <string>

#include "cli/commands.hpp"
#include "planmill/job/job_rules.hpp"
#include "planmill/job/loaded_job.hpp"
#include "planmill/rules/rules.hpp"

namespace planmill::cli {

namespace {
int run_check(const std::string& job_path) {
  const LoadedJob loaded = load_and_check_job(job_path);
  for (const auto& warning : loaded.report.warnings) std::cerr << "planmill: warning: " << warning << "\n";
  const UnitGraph& g = *loaded.graph;
  const auto components = g.components();
  const double ideal = static_cast<double>(g.total_population()) / static_cast<double>(loaded.job.districts);
  std::printf("job          %s\n", job_path.c_str());
  std::printf("units        %zu\n", g.unit_count());
  std::printf("edges        %zu\n", g.edge_count());
  std::printf("components   %zu\n", components.sizes.size());
  std::printf("districts    %zu\n", loaded.job.districts);
  std::printf("population   %lld total, %.1f ideal per district, tolerance +/-%.2f%%\n",
              static_cast<long long>(g.total_population()), ideal, 100.0 * loaded.job.rules.population_tolerance);
  if (g.has_counties()) std::printf("counties     %zu\n", g.counties().names.size());
  if (g.has_municipalities()) std::printf("towns        %zu\n", g.municipalities().names.size());
  if (loaded.report.zero_population_units > 0)
    std::printf("zero-pop     %zu units\n", loaded.report.zero_population_units);
  std::printf("count cols   %zu (%zu groups, %zu elections)\n", g.count_column_count(), g.group_columns().size(),
              g.elections().size());
  const RuleSet& rules = loaded.rules;
  for (const std::string& limit : describe_limits(rules, g)) {
    if (loaded.fewest && limit == "at most " + std::to_string(loaded.fewest->found) + " counties split") continue;
    std::printf("rule         %s\n", limit.c_str());
  }
  if (loaded.fewest) std::printf("rule         %s\n", describe_fewest(*loaded.fewest).c_str());
  if (rules.reads_group_columns()) {
    std::string columns;
    for (const GroupShareTerm& t : rules.group_share)
      if (columns.find("'" + g.count_column_name(t.column) + "'") == std::string::npos)
        columns += (columns.empty() ? "'" : ", '") + g.count_column_name(t.column) + "'";
    std::printf("group-blind  no: rules.group_share reads the group column%s %s, so the ensemble depends on "
                "group data and is no race-blind baseline (the manifest records this)\n",
                columns.find(',') == std::string::npos ? "" : "s", columns.c_str());
  }
  std::printf("start        %s\n", loaded.start ? loaded.job.start.c_str() : "random seed plans");
  std::printf("kernel       %s, %zu chains x %llu steps\n", kernel_name(loaded.job.sampler.kernel),
              loaded.job.sampler.chains, static_cast<unsigned long long>(loaded.job.sampler.steps));
  const MeasureSpec& m = loaded.measures;
  for (const auto& e : m.elections)
    std::printf("measure      election %s: %s against %s (seats, efficiency gap, mean-median, bias, "
                "declination, competitive in [%g, %g], sorted shares)\n",
                e.name.c_str(), e.party_a.c_str(), e.party_b.c_str(), m.competitive_low, m.competitive_high);
  for (const auto& gr : m.groups) {
    std::string above;
    for (const double t : gr.thresholds) {
      char text[32];
      std::snprintf(text, sizeof text, "%g", t);
      above += (above.empty() ? "" : ", ") + std::string(text);
    }
    std::printf("measure      group %s: share of %s, districts above %s, sorted shares\n", gr.name.c_str(),
                gr.denominator ? g.count_column_name(*gr.denominator).c_str() : "total population",
                above.empty() ? "(no threshold)" : above.c_str());
  }
  std::printf("measure      compactness: cut edges, Polsby-Popper%s\n",
              g.has_areas() && g.has_outer_boundary() && g.has_edge_lengths()
                  ? ""
                  : " (NaN: the map lacks areas, outer boundaries or shared lengths)");
  if (m.county_splits) std::printf("measure      county splits and pieces\n");
  if (m.municipality_splits) std::printf("measure      municipality splits and pieces\n");
  std::printf("ok\n");
  return 0;
}
}  // namespace

void add_check_command(CLI::App& app, Action& action) {
  auto* sub = app.add_subcommand("check", "load and validate everything a job file names, and summarise it");
  auto job = std::make_shared<std::string>();
  sub->add_option("job", *job, "job file (TOML)")->required();
  sub->callback([&action, job] { action = [job] { return run_check(*job); }; });
}

}  // namespace planmill::cli
