// The round loop that ties the runner together: rounds of steps on every rank, one agreement
// per round (signals, checkpoints due, progress, failures, steps left), commits, and the end.
#include "run/chain_runner.hpp"

#include <spdlog/spdlog.h>

#include <algorithm>
#include <cstdio>

#include "planmill/temper/ladder.hpp"

namespace planmill::runner {

RunOutcome ChainRunner::run() {
  prepare();
  if (state_.finished && !options_.until_converged) {
    RunOutcome out = outcome(RunEnd::nothing_to_do, Clock::now(), 0);
    out.summary = "the run in " + out.run_dir + " has finished already; nothing to do";
    return out;
  }
  build_chains();
  begin_session();
  return loop();
}

RunOutcome ChainRunner::loop() {
  std::uint64_t round_steps = 16;
  auto last_checkpoint = Clock::now();
  auto last_progress = Clock::now();
  std::uint64_t steps_at_last_progress = total_steps_local();
  std::uint64_t steps_since_commit = 0;
  const auto started = Clock::now();
  const std::uint64_t steps_at_start = total_steps_local();
  while (true) {
    const auto round_start = Clock::now();
    const std::uint64_t done = step_round(round_steps);
    steps_since_commit += done;
    std::uint64_t mine[kFieldCount] = {};
    mine[kStop] = g_stop_requested ? 1 : 0;
    mine[kCheckpointSignal] = g_checkpoint_requested ? 1 : 0;
    mine[kAccepted] = accepted_local();
    mine[kRecords] = records_local();
    mine[kRemaining] = remaining_local();
    mine[kStepsTotal] = total_steps_local();
    mine[kFailed] = step_status_ != 0 ? 1 : 0;
    if (w_.root()) {
      const auto now = Clock::now();
      const double seconds = std::chrono::duration<double>(now - last_checkpoint).count();
      mine[kCheckpointDue] = seconds >= loaded_->job.output.checkpoint_seconds ? 1 : 0;
      mine[kProgressDue] =
          options_.progress &&
                  std::chrono::duration<double>(now - last_progress).count() >= options_.progress_seconds
              ? 1
              : 0;
      const double round_seconds = std::chrono::duration<double>(now - round_start).count();
      const double scale =
          round_seconds > 0 ? std::clamp(kRoundSeconds / round_seconds, 0.5, 2.0) : 2.0;
      mine[kNextRound] = std::clamp<std::uint64_t>(
          static_cast<std::uint64_t>(static_cast<double>(round_steps) * scale), 1, 1'000'000);
    }
    std::uint64_t all[kFieldCount] = {};
    MPI_Allreduce(mine, all, kFieldCount, MPI_UINT64_T, MPI_SUM, MPI_COMM_WORLD);
    if (all[kFailed] > 0) end_on_step_error();
    round_steps = all[kNextRound];
    if (all[kProgressDue]) {
      report_progress(all, steps_at_last_progress, last_progress);
      last_progress = Clock::now();
      steps_at_last_progress = total_steps_local();
    }
    const bool stop = all[kStop] > 0;
    const bool reached = all[kRemaining] == 0;
    const bool checkpoint = stop || reached || all[kCheckpointSignal] > 0 || all[kCheckpointDue] > 0;
    if (checkpoint && (steps_since_commit > 0 || stop || (reached && !state_.finished))) {
      g_checkpoint_requested = 0;
      const bool final = stop || (reached && !options_.until_converged);
      commit(final ? (stop ? "checkpointed on signal" : "finished") : "");
      last_checkpoint = Clock::now();
      steps_since_commit = 0;
      if (all[kCheckpointSignal] > 0 && w_.root()) spdlog::info("checkpoint on SIGUSR1 written");
    }
    if (stop) return outcome(RunEnd::stopped_on_signal, started, steps_at_start);
    if (reached) {
      if (!options_.until_converged) return outcome(RunEnd::finished, started, steps_at_start);
      if (const auto end = judge_block()) return outcome(*end, started, steps_at_start);
    }
  }
}

std::uint64_t ChainRunner::step_round(std::uint64_t round_steps) {
  return tempered() ? step_ladders(round_steps) : step_chains(round_steps);
}

// A step that throws (a setting the map outgrew) ends this rank's round; the round's agreement
// then ends the run on every rank without a commit, so the last checkpoint stands.
[[noreturn]] void ChainRunner::end_on_step_error() {
  int worst = 0;
  MPI_Allreduce(&step_status_, &worst, 1, MPI_INT, MPI_MAX, MPI_COMM_WORLD);
  writer_.reset();  // its records were never committed
  if (w_.root()) {
    if (bar_shown_) std::fprintf(stderr, "\n");
    if (state_.checkpoints == 0) {
      spdlog::warn("stopped before the first checkpoint: {} holds nothing that counts, and a "
                   "fresh run may use it", layout_.root.string());
    } else {
      spdlog::warn("stopped; the run in {} keeps its last checkpoint ({} of them)",
                   layout_.root.string(), state_.checkpoints);
    }
  }
  if (!step_error_) throw RunFailedElsewhere{worst};
  try {
    std::rethrow_exception(step_error_);
  } catch (const InputError& e) {
    if (!e.where().file.empty()) throw;
    throw InputError({options_.job_path, 0, ""}, e.what());  // name the job the key is in
  }
}

// Plain chains step one after another and stop at once on a signal, mid-round.
std::uint64_t ChainRunner::step_chains(std::uint64_t round_steps) {
  std::uint64_t done = 0;
  const std::uint64_t target = state_.target_steps;
  for (auto& local : chains_) {
    const std::uint64_t steps = local.steps();
    if (steps >= target) continue;
    const std::uint64_t n = std::min(round_steps, target - steps);
    step_status_ = attempt(
        [&] {
          for (std::uint64_t i = 0; i < n && !g_stop_requested; ++i, ++done) {
            (void)local.chain->step();
            const std::uint64_t s = local.chain->counters().steps;
            if (s > state_.burn_in && s % state_.record_every == 0) record_chain(local, s);
          }
        },
        step_error_);
    if (step_status_ != 0 || g_stop_requested) break;
  }
  return done;
}

// Every ladder of the run has taken the same number of steps, so this rank's ladders step
// together, one ladder step at a time: first every replica held here, then in ladder order
// the swap rounds (the holders of a shared ladder add their energies) and the records. Every
// rank meets its partners in that same order, so no two ranks wait on each other.
std::uint64_t ChainRunner::step_ladders(std::uint64_t round_steps) {
  if (chains_.empty()) return 0;
  const std::uint64_t steps = chains_.front().ladder->steps(), target = state_.target_steps;
  if (steps >= target) return 0;
  const std::uint64_t n = std::min(round_steps, target - steps);
  for (std::uint64_t i = 0; i < n; ++i) {
    // After a failed step this rank steps no replica, but meets its partners to the round's end.
    for (auto& local : chains_) {
      if (step_status_ == 0) step_status_ = attempt([&] { local.ladder->step_replicas(); }, step_error_);
    }
    for (auto& local : chains_) {
      Ladder& ladder = *local.ladder;
      if (ladder.swap_due()) {
        ladder.local_energies(local.own_energy);
        if (local.holders == MPI_COMM_NULL) {
          std::copy(local.own_energy.begin(), local.own_energy.end(), local.energy.begin());
        } else {
          MPI_Allreduce(local.own_energy.data(), local.energy.data(),
                        static_cast<int>(local.energy.size()), MPI_DOUBLE, MPI_SUM, local.holders);
        }
      }
      ladder.finish_step(local.energy);
      const std::uint64_t s = ladder.steps();
      if (!local.tune && s == state_.burn_in) ladder.reset_statistics();
      if (s > state_.burn_in && s % state_.record_every == 0) record_ladder(local, s);
    }
  }
  return n;
}

std::uint64_t ChainRunner::sum_over_ranks(std::uint64_t local) {
  std::uint64_t all = 0;
  MPI_Allreduce(&local, &all, 1, MPI_UINT64_T, MPI_SUM, MPI_COMM_WORLD);
  return all;
}

std::uint64_t ChainRunner::total_steps_local() const {
  std::uint64_t n = 0;
  for (const auto& c : chains_) n += c.counters().steps;
  return n;
}

std::uint64_t ChainRunner::accepted_local() const {
  std::uint64_t n = 0;
  for (const auto& c : chains_) n += c.counters().outcomes[0];
  return n;
}

std::uint64_t ChainRunner::records_local() const {
  std::uint64_t n = 0;
  for (const auto& c : chains_) {
    if (c.home == w_.rank) n += c.entry.records + c.segment_records;
  }
  return n;
}

std::uint64_t ChainRunner::remaining_local() const {
  std::uint64_t n = 0;
  for (const auto& c : chains_) {
    const std::uint64_t s = c.steps();
    const std::uint64_t replicas = c.replicas_here();  // kernel steps, as counted
    n += s < state_.target_steps ? (state_.target_steps - s) * replicas : 0;
  }
  return n;
}

}  // namespace planmill::runner

namespace planmill {

RunOutcome run_job(const RunOptions& options) {
  if (options.until_converged && options.max_steps == 0) {
    throw InputError({"", 0, "--max-steps"}, "--until-converged needs a step budget",
                     "add --max-steps N (steps per chain, burn-in included)");
  }
  using runner::ChainRunner, runner::world;
  ChainRunner runner(options, world());
  return runner.run();
}

}  // namespace planmill
