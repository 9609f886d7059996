#pragma once
// The runner's state, shared by the files that implement it (private to src/run):
//   session.cpp          new or resumed run state, the session's start, building chains/ladders
//   runner.cpp           the round loop: stepping chains and ladders, and how a run ends
//   recorder.cpp         recording plans, observables and sorted vectors into this rank's plan file
//   observables.cpp      what is recorded with each plan (planmill/run/observables.hpp)
//   commit.cpp           the checkpoint: closing plan files, committing the run state
//   until_converged.cpp  judging a block of --until-converged by the stopping rule
//   progress.cpp         progress reports and the closing summary
#include <mpi.h>

#include <chrono>
#include <cstddef>
#include <cstdint>
#include <exception>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "planmill/chain/chain.hpp"
#include "planmill/diagnose/convergence.hpp"
#include "planmill/job/loaded_job.hpp"
#include "planmill/measures/measures.hpp"
#include "planmill/rules/rules.hpp"
#include "planmill/run/placement.hpp"
#include "planmill/run/run_lock.hpp"
#include "planmill/run/run_state.hpp"
#include "planmill/run/runner.hpp"
#include "planmill/store/ensemble.hpp"
#include "planmill/temper/ladder.hpp"
#include "run/world.hpp"

namespace planmill::runner {

using Clock = std::chrono::steady_clock;

// One chain of the run: a plain chain, or (this rank's part of) a ladder whose target rung is what
// gets recorded.
struct LocalChain {
  std::unique_ptr<Chain> chain;
  std::unique_ptr<Ladder> ladder;
  bool tune = false;  // ladder: tune during burn-in
  // A ladder: the rank of each replica, the rank that records it (the holder of replica 0), and
  // when it is shared, a communicator of its holders; energies per replica for swap rounds.
  std::vector<int> replica_ranks;
  int home = 0;
  MPI_Comm holders = MPI_COMM_NULL;
  std::vector<double> own_energy, energy;

  [[nodiscard]] std::uint64_t steps() const { return ladder ? ladder->steps() : chain->counters().steps; }
  [[nodiscard]] std::size_t replicas_here() const {
    if (!ladder) return 1;
    std::size_t n = 0;
    for (std::size_t i = 0; i < ladder->rungs(); ++i) n += ladder->holds(i) ? 1 : 0;
    return n;
  }
  // Kernel steps and outcomes, summed over the replicas held here.
  [[nodiscard]] ChainCounters counters() const {
    if (!ladder) return chain->counters();
    ChainCounters sum;
    for (std::size_t i = 0; i < ladder->rungs(); ++i) {
      if (!ladder->holds(i)) continue;
      const auto& c = ladder->replica(i).counters();
      sum.steps += c.steps;
      for (std::size_t k = 0; k < kStepResultCount; ++k) sum.outcomes[k] += c.outcomes[k];
    }
    return sum;
  }
  [[nodiscard]] std::string save() const { return ladder ? ladder->save() : chain->save(); }
  std::optional<MeasureEvaluator> measures;  // made once, used for every record of the chain
  ChainEntry entry;                      // as last committed
  std::vector<std::size_t> handles;      // in the open writer, per recorded rung; SIZE_MAX: none yet
  std::uint64_t segment_records = 0;     // recorded since the last checkpoint (on the home rank)
};

class ChainRunner {
 public:
  ChainRunner(const RunOptions& options, World w) : options_(options), w_(w) {}
  ChainRunner(const ChainRunner&) = delete;
  ChainRunner& operator=(const ChainRunner&) = delete;
  ~ChainRunner() {
    for (auto& local : chains_) {
      if (local.holders != MPI_COMM_NULL) MPI_Comm_free(&local.holders);
    }
  }


  RunOutcome run();

 private:
  // session.cpp
  void prepare();
  // Replicas per chain: 1 without tempering.
  [[nodiscard]] std::uint64_t rungs() const {
    return loaded_->job.tempering.enabled ? loaded_->job.tempering.rungs : 1;
  }
  [[nodiscard]] bool tempered() const { return loaded_->job.tempering.enabled; }
  [[nodiscard]] int home_rank(std::uint64_t chain) const {
    return tempered() ? replica_rank(chain, 0, state_.chains.size(), rungs(), w_.size)
                      : chain_rank(chain, w_.size);
  }
  RunState new_state();
  RunState resumed_state();
  void begin_session();
  void build_chains();
  Plan start_plan(std::uint64_t chain_index);

  // runner.cpp
  enum Field : std::size_t {
    kStop, kCheckpointSignal, kCheckpointDue, kNextRound, kAccepted, kRecords,
    kRemaining, kProgressDue, kStepsTotal, kFailed, kFieldCount
  };
  // Rounds this long answer a signal promptly: mpiexec gives the ranks about a second after it
  // forwards SIGTERM, and a round (of ladders, which cannot stop mid-round) must end well within.
  static constexpr double kRoundSeconds = 0.25;
  RunOutcome loop();
  std::uint64_t step_round(std::uint64_t round_steps);
  [[noreturn]] void end_on_step_error();
  std::uint64_t step_chains(std::uint64_t round_steps);
  std::uint64_t step_ladders(std::uint64_t round_steps);
  static std::uint64_t sum_over_ranks(std::uint64_t local);
  std::uint64_t total_steps_local() const;
  std::uint64_t accepted_local() const;
  std::uint64_t records_local() const;
  std::uint64_t remaining_local() const;

  // recorder.cpp
  void open_writer();
  std::size_t writer_handle(LocalChain& local, std::uint64_t rung);
  void record_chain(LocalChain& local, std::uint64_t step);
  void record_ladder(LocalChain& local, std::uint64_t step);

  // commit.cpp
  void commit(const std::string& how_ended);

  // until_converged.cpp
  std::optional<RunEnd> judge_block();
  diagnose::ConvergenceReport diagnose_committed() const;

  // progress.cpp
  void report_progress(const std::uint64_t* all, std::uint64_t steps_before,
                       Clock::time_point since);
  static std::string rate_text(double rate);
  RunOutcome outcome(RunEnd end, Clock::time_point started, std::uint64_t steps_at_start);

  RunOptions options_;
  World w_;
  std::unique_ptr<RunLock> lock_;  // rank 0: held for the whole run
  bool fresh_ = false;             // rank 0: a new run, its folder not yet written
  bool replace_empty_run_ = false;  // rank 0: the folder holds a run that never checkpointed
  std::string host_;
  std::unique_ptr<LoadedJob> loaded_;
  RuleSet rules_;
  RunLayout layout_;
  RunState state_;
  std::uint64_t segment_ = 0;
  MeasureSpec measure_spec_;              // the job's [measures] for this map
  std::vector<std::string> names_;        // observables
  std::vector<double> row_;
  std::vector<std::string> sorted_names_;  // the measures' sorted vectors
  std::vector<double> sorted_;             // one record's, one after another
  std::string measures_text_;              // measures_json() for the run state
  std::vector<LocalChain> chains_;
  EnsembleHeader header_;
  std::unique_ptr<EnsembleWriter> writer_;
  std::vector<DistrictIndex> incoming_plan_;  // a plan sent by the holder of a shared ladder's replica
  std::string writer_file_;
  std::string verdict_summary_;
  bool bar_shown_ = false;
  int step_status_ = 0;             // the exit status a failed step maps to; 0: none
  std::exception_ptr step_error_;   // that step's error
};

}  // namespace planmill::runner
