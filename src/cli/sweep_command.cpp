// `planmill sweep plan|run|compare` (docs/sweep.md): one base job under a grid of rule settings,
// one run per setting, the settings side by side. Exit statuses: 0 done, 2 bad input (nothing
// written), 5 an output not written; run: 4 stopped on a signal (resume by running it again);
// compare: 3 written, but some setting has not passed its verdict, 7 some setting is unfinished.
#include <filesystem>
#include <iostream>
#include <optional>

#include "cli/commands.hpp"
#include "cli/run_session.hpp"
#include "cli/whole_option.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/manifest/run_status.hpp"
#include "planmill/sweep/sweep.hpp"
#include "planmill/sweep/sweep_compare.hpp"

namespace planmill::cli {
namespace {

namespace fs = std::filesystem;

int plan_command(const std::string& sweep_file, const std::string& out, bool check_only) {
  const sweep::SweepPlan plan = sweep::plan_sweep(sweep_file, out);
  std::cout << sweep::describe_plan(plan);
  if (check_only) {
    std::cout << "every setting's job is valid; 'planmill sweep plan " << sweep_file << " --out " << out
              << "' writes them (nothing written now)\n";
    return 0;
  }
  if (sweep::write_sweep(plan, out))
    std::cout << "sweep folder: " << out << " (settings.csv lists the settings; run them with 'planmill sweep run "
              << out << "')\n";
  else
    std::cout << "sweep folder: " << out << " holds this plan already; nothing written\n";
  return 0;
}

// A check every rank makes alike from the same files: only rank 0 says what it found.
template <class F>
auto checked_alike(const MpiSession& mpi, F check) {
  try {
    return check();
  } catch (const InputError&) {
    if (mpi.rank() != 0) throw RunFailedElsewhere{2};
    throw;
  }
}

// One setting through the runner, as `planmill run SETTING/job.toml` (with --resume when its run
// folder holds a run), skipped when finished. Collective: every rank decides alike from the files.
int run_setting(const MpiSession& mpi, const sweep::SweepSetting& s, const RunOptions& base) {
  RunOptions options = base;
  options.job_path = s.job;
  options.output_dir = s.run;
  const std::string name = fs::path(s.folder).filename().string();
  if (fs::exists(fs::path(s.run) / "run-state.json")) {
    const RunCondition condition = checked_alike(mpi, [&] {
      const RunStatus status = run_status(s.run, {.check_files = false});
      if (status.condition == RunCondition::damaged)
        throw InputError({s.run, 0, {}}, "the run of setting " + name + " is damaged: " + status.why,
                         "see 'planmill status " + s.run + "'; remove the run folder to run the setting anew");
      return status.condition;
    });
    if (condition == RunCondition::finished) {
      if (mpi.rank() == 0) std::cout << "setting " << name << ": finished already, skipped\n";
      return 0;
    }
    options.resume = true;
  }
  MPI_Barrier(MPI_COMM_WORLD);  // no rank starts the run while another still reads its state
  if (mpi.rank() == 0) std::cout << "setting " << name << ": " << (options.resume ? "resuming" : "running") << "\n";
  const RunOutcome out = run_job(options);
  if (mpi.rank() == 0) std::cout << out.summary << "\n";
  return exit_status(out.end);
}

int run_command(const std::string& dir, const std::optional<std::size_t>& only, const RunOptions& base,
                const std::string& log_level, bool quiet) {
  MpiSession mpi;
  start_run_logging(mpi, log_level, quiet);
  return guarded_run(mpi, [&] {
    const sweep::SweepFolder folder = checked_alike(mpi, [&] {
      sweep::SweepFolder f = sweep::read_sweep_folder(dir);
      if (only && *only >= f.settings.size())
        throw InputError({"", 0, "--setting"},
                         "is " + std::to_string(*only) + ", but the sweep has settings 0.." +
                             std::to_string(f.settings.size() - 1),
                         "give a setting listed in " + dir + "/settings.csv");
      return f;
    });
    for (const sweep::SweepSetting& s : folder.settings) {
      if (only && s.index != *only) continue;
      if (const int status = run_setting(mpi, s, base); status != 0) return status;
    }
    return 0;
  });
}

int compare_command(const std::string& dir, const std::string& csv, const std::string& json,
                    const std::string& html) {
  const sweep::SweepComparison c = sweep::compare_sweep(dir);
  sweep::print_comparison(c, std::cout);
  // Every text is made before any is written, so a failure in the making writes none.
  std::vector<std::pair<std::string, std::string>> files;
  if (!csv.empty()) files.emplace_back(csv, sweep::comparison_csv(c));
  if (!json.empty()) files.emplace_back(json, sweep::comparison_json(c).dump(2) + "\n");
  if (!html.empty()) files.emplace_back(html, sweep::comparison_html(c));
  // Staged beside their places, then renamed in: an output that cannot be written leaves none new.
  std::vector<std::string> staged;
  try {
    for (const auto& [path, text] : files) {
      staged.push_back(path + ".staged");
      write_file_atomically(staged.back(), text);
    }
  } catch (const OutputError&) {
    std::error_code ec;
    for (const std::string& f : staged) fs::remove(f, ec);
    throw;
  }
  for (std::size_t i = 0; i < files.size(); ++i) {
    std::error_code ec;
    fs::rename(staged[i], files[i].first, ec);
    if (ec) throw OutputError(files[i].first + ": cannot move the staged file into place: " + ec.message());
  }
  if (!c.all_finished()) return 7;
  return c.all_passed() ? 0 : 3;
}

}  // namespace

void add_sweep_command(CLI::App& app, Action& action) {
  auto* sub = app.add_subcommand("sweep", "one job under a grid of rule settings: plan, run and compare them");
  sub->require_subcommand(1);

  auto* plan = sub->add_subcommand("plan", "expand a sweep file into one checked job per setting, in a sweep folder");
  struct PlanArgs {
    std::string file, out;
    bool check = false;
  };
  auto p = std::make_shared<PlanArgs>();
  plan->add_option("sweep", p->file, "sweep file (TOML, docs/sweep.md)")->required();
  plan->add_option("--out", p->out, "the sweep folder to write")->required();
  plan->add_flag("--check", p->check, "check every setting and list them; write nothing");
  plan->callback([&action, p] { action = [p] { return plan_command(p->file, p->out, p->check); }; });

  auto* run = sub->add_subcommand(
      "run", "run the settings of a sweep folder in turn (finished ones skipped, unfinished resumed), or one");
  struct RunArgs {
    std::string dir, setting, log_level = "info";
    bool quiet = false;
    RunOptions options;
  };
  auto r = std::make_shared<RunArgs>();
  run->add_option("dir", r->dir, "sweep folder")->required();
  run->add_option("--setting", r->setting, "only this setting (its index; e.g. $SLURM_ARRAY_TASK_ID)");
  run->add_flag("--allow-other-build", r->options.allow_other_build,
                "when resuming: go on even when this planmill was built differently (see planmill run)");
  run->add_flag("--quiet", r->quiet, "no progress reports, only warnings and errors");
  run->add_option("--log-level", r->log_level, "trace, debug, info, warn, error or off")
      ->check(CLI::IsMember({"trace", "debug", "info", "warn", "error", "off"}));
  run->callback([&action, r] {
    action = [r] {
      std::optional<std::size_t> only;
      if (!r->setting.empty())
        only = static_cast<std::size_t>(parse_whole_option(r->setting, "--setting", 0, 1'000'000, "a setting's index"));
      RunOptions options = r->options;
      options.progress = !r->quiet;
      return run_command(r->dir, only, options, r->log_level, r->quiet);
    };
  });

  auto* compare = sub->add_subcommand("compare", "the settings of a sweep side by side: seats, group shares, "
                                                 "compactness and splits, with each setting's verdict");
  struct CompareArgs {
    std::string dir, csv, json, html;
  };
  auto c = std::make_shared<CompareArgs>();
  compare->add_option("dir", c->dir, "sweep folder")->required();
  compare->add_option("--csv", c->csv, "write the comparison as CSV (one row per setting and measure)");
  compare->add_option("--json", c->json, "write the comparison as JSON");
  compare->add_option("--html", c->html, "write the comparison as one HTML page with figures");
  compare->callback([&action, c] { action = [c] { return compare_command(c->dir, c->csv, c->json, c->html); }; });
}

}  // namespace planmill::cli
