// planmill pool POOLDIR PIECE... [--drop PIECE --reason TEXT]...: several finished runs of one job
// with distinct seeds as one ensemble (planmill/manifest/pool.hpp, docs/manifest.md "Pools").
// Exit status: 0 pooled, 2 refused (names the piece and the difference; nothing written).
#include <iostream>
#include <memory>
#include <string>
#include <vector>

#include "cli/commands.hpp"
#include "planmill/base/error.hpp"
#include "planmill/manifest/pool.hpp"

namespace planmill::cli {
namespace {

struct PoolArgs {
  std::string pool_dir;
  std::vector<std::string> pieces, drops, reasons;
  bool allow_other_builds = false;
};

int run_pool_command(const PoolArgs& a) {
  if (a.drops.size() != a.reasons.size()) {
    throw InputError({"--reason", 0, ""},
                     "given " + std::to_string(a.reasons.size()) + " times for " +
                         std::to_string(a.drops.size()) + " --drop",
                     "follow each --drop PIECE with its --reason TEXT");
  }
  PoolRequest request{a.pool_dir, a.pieces, {}, a.allow_other_builds};
  for (std::size_t i = 0; i < a.drops.size(); ++i) request.drops.push_back({a.drops[i], a.reasons[i]});
  const PoolSummary s = make_pool(request);
  std::cout << "pooled " << s.pieces << " runs into " << a.pool_dir << ": " << s.chains << " chains, "
            << s.records << " records";
  if (s.dropped > 0) std::cout << "; " << s.dropped << " dropped (their reasons are in pool.json)";
  std::cout << "\n";
  return 0;
}

}  // namespace

void add_pool_command(CLI::App& app, Action& action) {
  auto args = std::make_shared<PoolArgs>();
  auto* sub = app.add_subcommand(
      "pool", "several finished runs of one job with distinct seeds as one ensemble (a folder that "
              "diagnose, compare, report, export and merge read as one run)");
  sub->add_option("POOLDIR", args->pool_dir, "the pool's folder (new or empty)")->required();
  sub->add_option("PIECES", args->pieces, "every piece's run folder, dropped ones too")->required();
  // One value each time: a --drop must not swallow the pieces that follow it.
  sub->add_option("--drop", args->drops, "leave this piece out (needs --reason)")->allow_extra_args(false);
  sub->add_option("--reason", args->reasons, "why the --drop before it is left out (kept in pool.json)")
      ->allow_extra_args(false);
  sub->add_flag("--allow-other-builds", args->allow_other_builds,
                "pool pieces drawn by builds that differ (each piece's build stays in run-state.json; "
                "pool.json records mixed_builds = true)");
  sub->footer("Exit status: 0 pooled, 2 refused (the message names the piece and the difference).");
  sub->callback([&action, args] { action = [args] { return run_pool_command(*args); }; });
}

}  // namespace planmill::cli
