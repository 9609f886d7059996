#include <cmath>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <nlohmann/json.hpp>

#include "cli/commands.hpp"
#include "cli/whole_option.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/io/json_number.hpp"
#include "planmill/job/loaded_job.hpp"
#include "planmill/job/kernel_settings.hpp"
#include "planmill/job/job_rules.hpp"
#include "planmill/selftest/selftest.hpp"

namespace planmill::cli {
namespace {

struct SelftestOptions {
  std::string job;
  bool quick = false;
  std::string samples, thin;  // empty: the case's own
  std::uint64_t seed = 1;
  std::string json;
  std::string frequencies;
};

std::vector<SelftestCase> cases_from_job(const SelftestOptions& options) {
  auto loaded = std::make_shared<LoadedJob>(load_and_check_job(options.job));
  SelftestCase c;
  c.name = options.job;
  c.districts = loaded->job.districts;
  c.rules = loaded->rules;
  c.kernel = make_kernel_settings(loaded->job);
  c.seed = options.seed;
  c.thin = c.kernel.kind == KernelKind::flip ? 40 : 10;
  c.graph = loaded->graph;
  // Frozen districts are those of the start plan: the exact law is over the plans keeping them.
  if (!c.kernel.frozen.empty() && loaded->start)
    c.start.assign(loaded->start->assignment().begin(), loaded->start->assignment().end());
  return {c};
}

nlohmann::json to_json(const SelftestResult& r) {
  return {{"case", r.name},          {"kernel", r.kernel},
          {"valid_plans", r.valid_plans}, {"samples", r.samples},
          {"plans_visited", r.plans_visited}, {"all_valid", r.all_valid},
          {"total_variation", json_number(r.total_variation)}, {"chi_square", json_number(r.chi_square)},
          {"degrees_of_freedom", r.degrees_of_freedom}, {"p_value", json_number(r.p_value)},
          {"acceptance", r.acceptance}, {"passed", r.passed}, {"note", r.note}};
}

int run(const SelftestOptions& options) {
  const std::uint64_t samples =
      options.samples.empty() ? 0 : parse_whole_option(options.samples, "--samples", 1, 100'000'000, "the recorded plans per case");
  const std::uint64_t thin =
      options.thin.empty() ? 0 : parse_whole_option(options.thin, "--thin", 1, 1'000'000, "the steps between recorded plans");
  std::vector<SelftestCase> cases = options.job.empty() ? builtin_selftest_cases(options.quick) : cases_from_job(options);
  std::printf("%-44s %-13s %7s %8s %7s %8s %9s %6s %s\n", "case", "kernel", "plans", "samples", "visited", "TV",
              "p-value", "accept", "result");
  nlohmann::json report = nlohmann::json::array();
  std::string frequencies = "case,plan,exact,seen,empirical\n";
  bool all_passed = true;
  for (auto& c : cases) {
    if (samples) c.samples = samples;
    if (thin) c.thin = thin;
    if (options.job.empty()) c.seed = options.seed;
    const SelftestResult r = run_selftest(c);
    all_passed &= r.passed;
    char tv[16] = "-", p[16] = "-";
    if (std::isfinite(r.total_variation)) {
      std::snprintf(tv, sizeof tv, "%.4f", r.total_variation);
      std::snprintf(p, sizeof p, "%.3g", r.p_value);
    }
    std::printf("%-44s %-13s %7zu %8llu %7zu %8s %9s %6.3f %s%s%s\n", r.name.c_str(), r.kernel.c_str(), r.valid_plans,
                static_cast<unsigned long long>(r.samples), r.plans_visited, tv, p, r.acceptance,
                r.passed ? "pass" : "FAIL", r.note.empty() ? "" : "  ", r.note.c_str());
    report.push_back(to_json(r));
    for (const auto& p : r.plans)
      frequencies += "\"" + r.name + "\"," + p.plan + "," + std::to_string(p.exact) + "," + std::to_string(p.seen) +
                     "," + std::to_string(static_cast<double>(p.seen) / static_cast<double>(r.samples)) + "\n";
  }
  if (!options.json.empty())
    write_file_atomically(options.json, nlohmann::json{{"passed", all_passed}, {"cases", report}}.dump(2) + "\n");
  if (!options.frequencies.empty()) write_file_atomically(options.frequencies, frequencies);
  std::printf("%s\n", all_passed ? "selftest passed" : "selftest FAILED");
  return all_passed ? 0 : 3;
}

}  // namespace

void add_selftest_command(CLI::App& app, Action& action) {
  auto options = std::make_shared<SelftestOptions>();
  auto* sub = app.add_subcommand(
      "selftest", "check each kernel's law against exact enumeration (built-in small maps, or a small job's map)");
  sub->add_option("job", options->job, "a job file whose map is small enough to enumerate (optional)");
  sub->add_flag("--quick", options->quick, "fewer samples (a few seconds)");
  sub->add_option("--samples", options->samples, "recorded plans per case (1 or more)");
  sub->add_option("--thin", options->thin, "steps between recorded plans (1 or more)");
  sub->add_option("--seed", options->seed, "random seed");
  sub->add_option("--json", options->json, "write the results as JSON");
  sub->add_option("--frequencies", options->frequencies, "write exact and empirical probability of every plan (CSV)");
  sub->callback([&action, options] { action = [options] { return run(*options); }; });
}

}  // namespace planmill::cli
