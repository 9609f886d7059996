// --until-converged: after each block, rank 0 reads the committed records and the stopping rule
// (diagnose/convergence.hpp, as `planmill diagnose`) decides whether the run stops or every chain goes on a block.
#include "run/chain_runner.hpp"

#include <spdlog/spdlog.h>

#include <algorithm>

#include "planmill/diagnose/convergence.hpp"
#include "planmill/diagnose/verdict.hpp"
#include "planmill/store/hdf5_handle.hpp"
#include "planmill/run/judged_draws.hpp"
#include "planmill/run/run_reader.hpp"

namespace planmill::runner {

// After a block of --until-converged: diagnose the committed records on rank 0 and either stop
// or extend every chain's target by one more block (nullopt: go on).
std::optional<RunEnd> ChainRunner::judge_block() {
  std::uint64_t decision[2] = {0, state_.target_steps};  // 0 go on, 1 converged, 2 budget spent
  std::string summary;
  on_root_then_agree(w_, [&] {
    // The stopping rule (diagnose/stopping_rule.hpp): long enough, and a passing verdict on the
    // whole record and on its later half alone, so a lucky early pass does not end the run.
    const diagnose::ConvergenceReport report = diagnose_committed();
    const diagnose::StopCheck& stop = report.stop;
    const diagnose::Verdict& verdict = stop.deciding();
    const std::uint64_t block = std::max<std::uint64_t>(
        loaded_->job.sampler.steps - loaded_->job.sampler.burn_in, state_.record_every);
    if (report.pass()) {
      decision[0] = 1;
    } else if (state_.target_steps >= options_.max_steps) {
      decision[0] = 2;
    } else {
      decision[1] = std::min(options_.max_steps, state_.target_steps + block);
    }
    if (!report.pass()) summary = "\n  stopping rule: " + stop.summary();
    for (const auto& l : report.left_out) summary += "\n  left out: chain " + l.chain + ": " + l.why;
    for (const auto& f : verdict.failures) {
      summary += "\n  " + f.name + ": " + f.problem;
    }
    if (decision[0] == 0) {
      spdlog::info("verdict after {} steps per chain: not yet ({}){}; going on to {}",
                   state_.target_steps, stop.failed_part(), summary, decision[1]);
    }
  });
  MPI_Bcast(decision, 2, MPI_UINT64_T, 0, MPI_COMM_WORLD);
  verdict_summary_ = summary;
  if (decision[0] == 0) {
    state_.target_steps = decision[1];
    return std::nullopt;
  }
  const bool converged = decision[0] == 1;
  on_root_then_agree(w_, [&] {
    state_.finished = true;
    state_.stop_reason = converged ? "converged" : "step budget spent before convergence";
    state_.sessions.back().ended = utc_now_iso8601();
    state_.sessions.back().how_ended = state_.stop_reason;
    write_run_state(layout_, state_);
  });
  return converged ? RunEnd::converged : RunEnd::budget_spent;
}

// The committed records, through the one path from records to a verdict (as `planmill
// diagnose`): a chain whose observables cannot be read is left out and the verdict fails.
diagnose::ConvergenceReport ChainRunner::diagnose_committed() const {
  RunReader reader(layout_.root.string());
  diagnose::RecordedDraws draws;
  draws.observables = names_;
  for (const auto c : reader.chains()) {
    try {
      draws.chains.push_back({std::to_string(c), reader.read_observables(c)});
    } catch (const StoreError& e) {
      draws.left_out.push_back({std::to_string(c), std::string("observables cannot be read: ") + e.what()});
    }
  }
  const JudgedDraws judged = judged_draws(draws, loaded_->job.verdict_judge);
  diagnose::ConvergenceReport report = diagnose::assess_convergence(judged.draws, loaded_->job.verdict);
  report.notes.insert(report.notes.end(), judged.notes.begin(), judged.notes.end());
  return report;
}

}  // namespace planmill::runner
