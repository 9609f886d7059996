// `mpiexec planmill run --until-converged` stops by the stopping rule (diagnose/stopping_rule.hpp):
// only once every chain holds [verdict] min_records records and the verdict passes on the whole
// record and on its later half alone. Each block end's check is recomputed here from the records
// the run left, with the library's assess_convergence: every earlier check fails, the last one passes.
#include <gtest/gtest.h>

#include <fstream>
#include <string>
#include <vector>

#include "../support/run_jobs.hpp"
#include "planmill/diagnose/convergence.hpp"
#include "planmill/run/judged_draws.hpp"
#include "planmill/run/run_reader.hpp"
#include "planmill/run/run_state.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using test::shell;
using test::read_text;

// The rule's check on the first `records` records of every chain, by the one path the runner takes.
diagnose::StopCheck check_prefix(const RunReader& reader, std::size_t records, const diagnose::VerdictRule& rule) {
  diagnose::RecordedDraws draws;
  draws.observables = reader.observable_names();
  for (const auto c : reader.chains()) {
    std::vector<double> rows = reader.read_observables(c);
    rows.resize(records * draws.observables.size());
    draws.chains.push_back({std::to_string(c), std::move(rows)});
  }
  // As the runner: observables with a value that is not a number are not judged.
  return diagnose::assess_convergence(judged_draws(draws, std::nullopt).draws, rule).stop;
}

TEST(UntilConverged, StopsOnlyWhenTheStoppingRuleHolds) {
  const fs::path dir = test::scratch_dir("planmill-until-converged", "rule");
  // Blocks of 500 steps after a burn-in of 100, one record every 2 steps: 250 records a block.
  // min_records = 600 makes the first two checks too short.
  const fs::path job =
      test::write_synth_job(dir, "chains = 4\nsteps = 600\nburn_in = 100\nrecord_every = 2\nseed = 4");
  std::ofstream(job, std::ios::app) << "[verdict]\nrhat_max = 1.05\ness_min = 200\nmin_records = 600\n";
  const fs::path out = dir / "run";
  ::setenv("OMPI_ALLOW_RUN_AS_ROOT", "1", 1);
  ::setenv("OMPI_ALLOW_RUN_AS_ROOT_CONFIRM", "1", 1);
  ASSERT_EQ(shell("mpiexec --oversubscribe -n 2 " + std::string(PLANMILL_BINARY) + " run " + job.string() +
                  " --output " + out.string() + " --until-converged --max-steps 10100 > " +
                  (dir / "run.log").string() + " 2>&1"),
            0)
      << read_text(dir / "run.log");
  const RunState state = read_run_state(RunLayout{out});
  EXPECT_EQ(state.stop_reason, "converged");
  EXPECT_NE(read_text(dir / "run.log").find("converged: the stopping rule holds"), std::string::npos)
      << read_text(dir / "run.log");
  const RunReader reader(out.string());
  const std::size_t records = reader.record_count(reader.chains()[0]);
  const diagnose::VerdictRule rule{1.05, 200, 600};
  EXPECT_GE(records, 600u);
  ASSERT_EQ(records % 250, 0u) << "the run stops at a block end";
  for (std::size_t n = 250; n < records; n += 250) {
    const diagnose::StopCheck earlier = check_prefix(reader, n, rule);
    EXPECT_FALSE(earlier.pass()) << "the rule held at " << n << " records but the run went on";
  }
  const diagnose::StopCheck last = check_prefix(reader, records, rule);
  EXPECT_TRUE(last.pass()) << last.summary();
  // On this run the whole record's verdict passes before the rule does (at 1,250 records, when the
  // later half still fails): stopping on the verdict alone would have stopped there.
  std::size_t first_whole_pass = 0;
  for (std::size_t n = 250; n <= records && first_whole_pass == 0; n += 250)
    if (check_prefix(reader, n, rule).whole.pass) first_whole_pass = n;
  EXPECT_GT(first_whole_pass, 0u);
  EXPECT_LT(first_whole_pass, records) << "the whole-record verdict first passed only at the stop";

  // diagnose uses the same rule: it passes on the run, and with a longer minimum says why not.
  EXPECT_EQ(shell(std::string(PLANMILL_BINARY) + " diagnose " + out.string() + " > /dev/null"), 0);
  EXPECT_EQ(shell(std::string(PLANMILL_BINARY) + " diagnose " + out.string() + " --min-records " +
                  std::to_string(records + 1) + " > " + (dir / "diag.txt").string()),
            3);
  const std::string text = read_text(dir / "diag.txt");
  EXPECT_NE(text.find("verdict: fail (too short"), std::string::npos) << text;
}

}  // namespace
}  // namespace planmill
