// --until-converged: after each block, rank 0 reads the committed records and the stopping rule
// (diagnose/stopping_rule.hpp) decides whether the run stops or every chain goes on a block.
#include "run/chain_runner.hpp"

#include <spdlog/spdlog.h>

#include <algorithm>

#include "planmill/diagnose/verdict.hpp"
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
    const diagnose::StopCheck stop = diagnose_committed();
    const diagnose::Verdict& verdict = stop.whole.pass && stop.long_enough() ? stop.later : stop.whole;
    const std::uint64_t block = std::max<std::uint64_t>(
        loaded_->job.sampler.steps - loaded_->job.sampler.burn_in, state_.record_every);
    if (stop.pass()) {
      decision[0] = 1;
    } else if (state_.target_steps >= options_.max_steps) {
      decision[0] = 2;
    } else {
      decision[1] = std::min(options_.max_steps, state_.target_steps + block);
    }
    if (!stop.pass()) summary = "\n  stopping rule: " + stop.summary();
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

diagnose::StopCheck ChainRunner::diagnose_committed() const {
  RunReader reader(layout_.root.string());
  const auto chains = reader.chains();
  std::size_t draws = SIZE_MAX;
  std::vector<std::vector<double>> rows;
  for (const auto c : chains) {
    rows.push_back(reader.read_observables(c));
    draws = std::min(draws, reader.record_count(c));
  }
  const std::size_t width = names_.size();
  const std::size_t cells = draws * chains.size();
  std::vector<double> values(cells * width);
  std::vector<diagnose::NamedDraws> quantities;
  for (std::size_t j = 0; j < width; ++j) {
    double* matrix = values.data() + j * cells;
    for (std::size_t c = 0; c < chains.size(); ++c) {
      for (std::size_t d = 0; d < draws; ++d) matrix[c * draws + d] = rows[c][d * width + j];
    }
    quantities.push_back({names_[j], {{matrix, cells}, draws, chains.size()}});
  }
  const auto& v = loaded_->job.verdict;
  return diagnose::check_stop(quantities, {v.rhat_max, v.ess_min, static_cast<std::size_t>(v.min_records)});
}

}  // namespace planmill::runner
