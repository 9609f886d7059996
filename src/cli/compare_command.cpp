// planmill compare RUNDIR PLAN.csv: where one plan stands in a run's ensemble (docs/compare.md).
// Text on the terminal; --json FILE and --csv FILE write the same comparison. Exit status: 0 done
// and the ensemble passed its verdict, 3 done but the ensemble has not passed it, 2 bad input.
#include <iostream>
#include <memory>
#include <string>
#include <vector>

#include "cli/commands.hpp"
#include "cli/whole_option.hpp"
#include "planmill/compare/record_filter.hpp"
#include "planmill/compare/run_comparison.hpp"
#include "planmill/io/atomic_file.hpp"

namespace planmill::cli {
namespace {

struct CompareArgs {
  compare::CompareOptions options;
  std::string json, csv, drop_records;
  std::vector<std::string> keep;
};

int run_compare(CompareArgs& a) {
  if (!a.drop_records.empty())
    a.options.dropped_records = parse_whole_option(a.drop_records, "--drop-records", 0, UINT64_MAX,
                                                   "the leading records to drop from every chain");
  for (const std::string& k : a.keep) a.options.filters.push_back(compare::parse_record_filter(k));
  const compare::CompareReport report = compare::compare_plan_with_run(a.options);
  compare::print_report(report, std::cout);
  if (!a.json.empty()) {
    write_file_atomically(a.json, compare::report_json(report).dump(2) + "\n");
    std::cout << "comparison written to " << a.json << "\n";
  }
  if (!a.csv.empty()) {
    write_file_atomically(a.csv, compare::report_csv(report));
    std::cout << "comparison table written to " << a.csv << "\n";
  }
  return report.verdict_pass ? 0 : 3;
}

}  // namespace

void add_compare_command(CLI::App& app, Action& action) {
  auto args = std::make_shared<CompareArgs>();
  auto* sub = app.add_subcommand("compare", "place a plan within an ensemble");
  sub->add_option("RUNDIR", args->options.run_dir, "run folder written by 'planmill run'")->required();
  sub->add_option("PLAN", args->options.plan_file, "plan CSV on the run's units (unit,district)")->required();
  sub->add_option("--crosswalk", args->options.crosswalk_file,
                  "PLAN is on finer units: carry it onto the run's units through this crosswalk (docs/score.md)");
  sub->add_option("--json", args->json, "also write the comparison as JSON");
  sub->add_option("--csv", args->csv, "also write the comparison as one CSV table");
  sub->add_option("--drop-records", args->drop_records,
                  "drop the first N records of every chain beyond the job's burn-in (default 0)");
  sub->add_option("--keep", args->keep,
                  "compare only with records where 'OBSERVABLE OP NUMBER' holds (OP < <= == >= >; repeatable, "
                  "all must hold; docs/pick.md)")
      ->allow_extra_args(false);
  sub->callback([&action, args] { action = [args] { return run_compare(*args); }; });
}

}  // namespace planmill::cli
