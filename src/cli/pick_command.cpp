// planmill pick RUNDIR --aim ... [--keep ...] [--count N] --out DIR: demonstration plans, the
// ensemble's records that best meet stated aims (docs/pick.md). Exit status as compare's: 0 done
// and the ensemble passed its verdict, 3 done but not passed, 2 bad input.
#include <iostream>
#include <memory>
#include <string>
#include <vector>

#include "cli/commands.hpp"
#include "cli/whole_option.hpp"
#include "planmill/compare/report.hpp"
#include "planmill/pick/pick.hpp"

namespace planmill::cli {
namespace {

struct PickArgs {
  pick::PickOptions options;
  std::vector<std::string> aims, keep;
  std::string count, drop_records;
};

int run_pick(PickArgs& a) {
  for (const std::string& s : a.aims) a.options.aims.push_back(pick::parse_aim(s));
  for (const std::string& k : a.keep) a.options.filters.push_back(compare::parse_record_filter(k));
  if (!a.count.empty()) a.options.count = parse_whole_option(a.count, "--count", 1, 100000, "the plans to pick");
  if (!a.drop_records.empty())
    a.options.dropped_records = parse_whole_option(a.drop_records, "--drop-records", 0, UINT64_MAX,
                                                   "the leading records to drop from every chain");
  pick::check_out_dir(a.options);  // before the work, not after it
  const pick::PickResult result = pick::pick_plans(a.options);
  pick::write_picks(result, a.options);
  std::cout << pick::picks_summary(result);
  std::cout << "picks written to " << a.options.out_dir << "\n";
  return result.verdict_pass ? 0 : 3;
}

}  // namespace

void add_pick_command(CLI::App& app, Action& action) {
  auto args = std::make_shared<PickArgs>();
  auto* sub = app.add_subcommand("pick", "pick the ensemble's plans that best meet stated aims");
  sub->add_option("RUNDIR", args->options.run_dir, "run folder written by 'planmill run'")->required();
  sub->add_option("--aim", args->aims,
                  "most:OBSERVABLE or fewest:OBSERVABLE; repeatable, ranked in the order given")
      ->required()
      ->allow_extra_args(false);
  sub->add_option("--keep", args->keep,
                  "pick only among records where 'OBSERVABLE OP NUMBER' holds (OP < <= == >= >; repeatable)")
      ->allow_extra_args(false);
  sub->add_option("--count", args->count, "distinct plans to pick (default 1)");
  sub->add_option("--drop-records", args->drop_records,
                  "drop the first N records of every chain beyond the job's burn-in (default 0)");
  sub->add_option("--out", args->options.out_dir, "folder for the picked plans, their table and summary")->required();
  sub->add_flag("--force", args->options.force, "replace --out if it exists and is not empty");
  sub->callback([&action, args] { action = [args] { return run_pick(*args); }; });
}

}  // namespace planmill::cli
