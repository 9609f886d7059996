#include "planmill/run/runner.hpp"

#include <fcntl.h>
#include <mpi.h>
#include <spdlog/spdlog.h>
#include <unistd.h>

#include <algorithm>
#include <cctype>
#include <chrono>
#include <csignal>
#include <cstdio>
#include <filesystem>
#include <map>
#include <memory>
#include <optional>
#include <stdexcept>
#include <utility>
#include <vector>

#include "planmill/base/error.hpp"
#include "planmill/chain/chain.hpp"
#include "planmill/chain/snapshot_check.hpp"
#include "planmill/diagnose/convergence.hpp"
#include "planmill/diagnose/verdict.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/io/file_hash.hpp"
#include "planmill/job/job_rules.hpp"
#include "planmill/job/kernel_settings.hpp"
#include "planmill/job/loaded_job.hpp"
#include "planmill/run/build_info.hpp"
#include "planmill/run/observables.hpp"
#include "planmill/run/placement.hpp"
#include "planmill/run/run_lock.hpp"
#include "planmill/run/run_reader.hpp"
#include "planmill/run/run_state.hpp"
#include "planmill/seed/seed_plan.hpp"
#include "planmill/store/ensemble.hpp"
#include "planmill/store/hdf5_handle.hpp"
#include "planmill/temper/job_ladder.hpp"
#include "planmill/temper/ladder_summary.hpp"
#include "planmill/version.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using Clock = std::chrono::steady_clock;

volatile std::sig_atomic_t g_stop_requested = 0;
volatile std::sig_atomic_t g_checkpoint_requested = 0;
extern "C" void on_stop_signal(int /*signal*/) { g_stop_requested = 1; }
extern "C" void on_checkpoint_signal(int /*signal*/) { g_checkpoint_requested = 1; }

// Point-to-point messages: a plan recorded by a ladder's home rank from a replica held elsewhere.
constexpr int kRecordTag = 17;
static_assert(sizeof(DistrictIndex) == 2, "plans travel as MPI_UINT16_T");

// Seed plans draw from their own streams, apart from the chains' (keyed by the chain index) and
// the ladders' swap streams (temper/ladder.hpp: 2^62 + ladder index).
constexpr std::uint64_t kSeedPlanStreamBase = 3ULL << 61;

struct World {
  int rank = 0, size = 1;
  [[nodiscard]] bool root() const { return rank == 0; }
};

World world() {
  World w;
  MPI_Comm_rank(MPI_COMM_WORLD, &w.rank);
  MPI_Comm_size(MPI_COMM_WORLD, &w.size);
  return w;
}

// Rank 0's text, on every rank.
std::string broadcast_string(std::string text) {
  std::uint64_t size = text.size();
  MPI_Bcast(&size, 1, MPI_UINT64_T, 0, MPI_COMM_WORLD);
  text.resize(size);
  MPI_Bcast(text.data(), static_cast<int>(size), MPI_CHAR, 0, MPI_COMM_WORLD);
  return text;
}

// On rank 0: every rank's text, by rank; elsewhere: empty.
std::vector<std::string> gather_strings(const std::string& mine, const World& w) {
  const int size = static_cast<int>(mine.size());
  std::vector<int> sizes(static_cast<std::size_t>(w.size)), offsets(sizes.size());
  MPI_Gather(&size, 1, MPI_INT, sizes.data(), 1, MPI_INT, 0, MPI_COMM_WORLD);
  std::string all;
  if (w.root()) {
    int total = 0;
    for (std::size_t r = 0; r < sizes.size(); ++r) offsets[r] = total, total += sizes[r];
    all.resize(static_cast<std::size_t>(total));
  }
  MPI_Gatherv(mine.data(), size, MPI_CHAR, all.data(), sizes.data(), offsets.data(), MPI_CHAR, 0,
              MPI_COMM_WORLD);
  std::vector<std::string> out;
  if (w.root()) {
    for (std::size_t r = 0; r < sizes.size(); ++r) {
      out.push_back(all.substr(static_cast<std::size_t>(offsets[r]), static_cast<std::size_t>(sizes[r])));
    }
  }
  return out;
}

// Runs `work`; returns the exit status its error maps to (0: none) and keeps the error.
template <class Work>
int attempt(Work&& work, std::exception_ptr& error) {
  try {
    work();
    return 0;
  } catch (const InputError&) {
    error = std::current_exception();
    return 2;
  } catch (const InfeasibleError&) {
    error = std::current_exception();
    return 2;
  } catch (const OutputError&) {
    error = std::current_exception();
    return 5;
  } catch (...) {
    error = std::current_exception();
    return 1;
  }
}

// Runs `work` on rank 0 and shares how it went: a problem there ends every rank (rank 0 throws
// the real error, the others RunFailedElsewhere).
template <class Work>
void on_root_then_agree(const World& w, Work&& work) {
  std::exception_ptr error;
  int status = w.root() ? attempt(work, error) : 0;
  MPI_Bcast(&status, 1, MPI_INT, 0, MPI_COMM_WORLD);
  if (error) std::rethrow_exception(error);
  if (status != 0) throw RunFailedElsewhere{status};
}

// Every rank does `work`; if any rank fails, all stop (the failing ones rethrow their error).
template <class Work>
void everywhere_then_agree(Work&& work) {
  std::exception_ptr error;
  const int status = attempt(work, error);
  int worst = 0;
  MPI_Allreduce(&status, &worst, 1, MPI_INT, MPI_MAX, MPI_COMM_WORLD);
  if (error) std::rethrow_exception(error);
  if (worst != 0) throw RunFailedElsewhere{worst};
}

std::string host_name() {
  char name[MPI_MAX_PROCESSOR_NAME] = {};
  int length = 0;
  MPI_Get_processor_name(name, &length);
  return {name, static_cast<std::size_t>(length)};
}

void fsync_path(const fs::path& path) {
  const int fd = ::open(path.c_str(), O_RDONLY);
  if (fd < 0) throw std::runtime_error("cannot open " + path.string() + " to flush it to disk");
  const int rc = ::fsync(fd);
  ::close(fd);
  if (rc != 0) throw std::runtime_error("cannot flush " + path.string() + " to disk");
}

std::string make_run_id(const std::string& job_text, std::uint64_t seed) {
  const std::string now = utc_now_iso8601();
  std::string stamp;
  for (const char c : now) {
    if (std::isdigit(static_cast<unsigned char>(c))) stamp.push_back(c);
  }
  const auto salt = std::chrono::system_clock::now().time_since_epoch().count();
  return "run-" + stamp + "-" +
         sha256_hex(job_text + std::to_string(seed) + std::to_string(salt)).substr(0, 8);
}

StoredCounters stored(const ChainCounters& c) {
  return {c.steps, c.outcomes[static_cast<std::size_t>(StepResult::accepted)],
          c.outcomes[static_cast<std::size_t>(StepResult::rejected)],
          c.outcomes[static_cast<std::size_t>(StepResult::no_cut)],
          c.outcomes[static_cast<std::size_t>(StepResult::invalid)]};
}

std::string duration_text(double seconds) {
  if (!(seconds >= 0) || seconds > 1e8) return "?";
  const auto s = static_cast<long long>(seconds + 0.5);
  char text[32];
  if (s >= 3600) {
    std::snprintf(text, sizeof text, "%lldh%02lldm", s / 3600, (s / 60) % 60);
  } else if (s >= 60) {
    std::snprintf(text, sizeof text, "%lldm%02llds", s / 60, s % 60);
  } else {
    std::snprintf(text, sizeof text, "%llds", s);
  }
  return text;
}

// Plan files of segments the state does not list: left by a session that was killed before its
// checkpoint, they hold nothing that counts, and their names will be written again.
void remove_unlisted_plan_files(const RunLayout& layout, const RunState& state) {
  if (!fs::exists(layout.plans_dir())) return;
  for (const auto& entry : fs::directory_iterator(layout.plans_dir())) {
    const std::string name = "plans/" + entry.path().filename().string();
    if (name.rfind("plans/seg-", 0) != 0 || entry.path().extension() != ".h5") continue;
    const bool listed = std::any_of(state.files.begin(), state.files.end(),
                                    [&](const PlanFileEntry& f) { return f.file == name; });
    if (!listed) {
      spdlog::info("removing {}: written after the last checkpoint, replaced by this session",
                   name);
      fs::remove(entry.path());
    }
  }
}

StoredCounters add_over(const StoredCounters& mine, MPI_Comm comm) {
  std::uint64_t in[5] = {mine.steps, mine.accepted, mine.rejected, mine.no_cut, mine.invalid};
  std::uint64_t out[5] = {};
  MPI_Allreduce(in, out, 5, MPI_UINT64_T, MPI_SUM, comm);
  return {out[0], out[1], out[2], out[3], out[4]};
}

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

  RunOutcome run() {
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

 private:
  // ---- setup ----
  void prepare() {
    everywhere_then_agree([&] {
      loaded_ = std::make_unique<LoadedJob>(load_and_check_job(options_.job_path));
      rules_ = make_rule_set(loaded_->job.rules, *loaded_->graph, options_.job_path);
    });
    const JobSpec& job = loaded_->job;
    const std::string dir = options_.output_dir ? *options_.output_dir : job.output.dir;
    layout_ = RunLayout{dir};
    host_ = host_name();
    const std::vector<std::string> hosts = gather_strings(host_, w_);
    std::string encoded;
    on_root_then_agree(w_, [&] {
      if (dir.empty()) {
        throw InputError({options_.job_path, 0, "output.dir"}, "names no output folder",
                         "set [output] dir in the job file or give --output DIR");
      }
      // Before anything in the folder is read, written or removed: one run per folder.
      lock_ = std::make_unique<RunLock>(layout_.root);
      fresh_ = !options_.resume;
      RunState state = fresh_ ? new_state() : resumed_state();
      state.sessions.push_back({utc_now_iso8601(), "", w_.size, hosts, ""});
      encoded = encode_run_state(state);
    });
    state_ = decode_run_state(broadcast_string(encoded));
    segment_ = state_.checkpoints;
    names_ = state_.observable_names;
    row_.assign(names_.size(), 0.0);
    if (w_.root()) {
      for (const auto& warning : loaded_->report.warnings) spdlog::warn("{}", warning);
      if (loaded_->start && loaded_->job.starts == ChainStarts::given && state_.chains.size() > 1) {
        spdlog::warn("every chain starts from {}: R-hat cannot see chains that all stay near one "
                     "plan; confirm a verdict with districts.starts = \"mixed\" or \"random\"",
                     loaded_->job.start);
      }
      const std::size_t units = state_.chains.size() * rungs();
      if (units < static_cast<std::size_t>(w_.size)) {
        spdlog::warn("{} {} on {} ranks: {} ranks have nothing to do", units,
                     rungs() > 1 ? "replicas" : "chains", w_.size,
                     static_cast<std::size_t>(w_.size) - units);
      }
    }
  }

  // Replicas per chain: 1 without tempering.
  [[nodiscard]] std::uint64_t rungs() const {
    return loaded_->job.tempering.enabled ? loaded_->job.tempering.rungs : 1;
  }
  [[nodiscard]] bool tempered() const { return loaded_->job.tempering.enabled; }
  [[nodiscard]] int home_rank(std::uint64_t chain) const {
    return tempered() ? replica_rank(chain, 0, state_.chains.size(), rungs(), w_.size)
                      : chain_rank(chain, w_.size);
  }

  // The state of a run not yet begun: nothing is written until every chain is built.
  RunState new_state() {
    const JobSpec& job = loaded_->job;
    // A run that failed or was killed before its first checkpoint holds nothing that counts: a
    // fresh run takes its folder over (once its own chains are built).
    const bool holds_run = fs::exists(layout_.state_file());
    replace_empty_run_ = holds_run && read_run_state(layout_).checkpoints == 0;
    if (holds_run && !replace_empty_run_) {
      throw InputError({layout_.state_file().string(), 0, ""}, "already holds a run",
                       "add --resume to continue it, or choose another folder with --output");
    }
    for (const auto& entry : fs::directory_iterator(layout_.root)) {
      const fs::path name = entry.path().filename();
      if (name == RunLock::file_name()) continue;
      if (replace_empty_run_ && (name == layout_.state_file().filename() ||
                                 name == layout_.job_copy().filename() ||
                                 name == layout_.plans_dir().filename())) {
        continue;
      }
      throw InputError({layout_.root.string(), 0, ""},
                       "is not empty (it holds " + name.string() +
                           ") and holds no run",
                       "give a new or empty folder with --output or [output] dir");
    }
    RunState s;
    s.run_id = make_run_id(job.text, job.sampler.seed);
    s.planmill_version = kVersion;
    s.git_commit = kGitCommit;
    s.job_path = fs::absolute(options_.job_path).lexically_normal().string();
    s.job_sha256 = sha256_hex(job.text);
    s.inputs.push_back({"job", input_path_for_state(s.job_path, s.job_path), s.job_sha256});
    s.builds.push_back(this_build());
    // By content and by the path the job names (relative to the job file): a resume checks the
    // files the job it is given names, wherever the run folder and its inputs are now.
    const auto input = [&](const char* role, const std::string& path) {
      s.inputs.push_back({role, input_path_for_state(s.job_path, path), sha256_file_hex(path)});
    };
    input("units", job.map.units_path);
    input("adjacency", job.map.adjacency_path);
    if (loaded_->start) input("start plan", job.start);
    s.seed = job.sampler.seed;
    s.target_steps = job.sampler.steps;
    s.burn_in = job.sampler.burn_in;
    s.record_every = job.sampler.record_every;
    s.observable_names = observable_names(*loaded_->graph, rules_);
    for (std::uint64_t c = 0; c < job.sampler.chains; ++c) {
      ChainEntry entry;
      entry.index = c;
      if (job.tempering.enabled && job.tempering.record == TemperingRecord::all) {
        entry.recorded_rungs = job.tempering.rungs;
      }
      s.chains.push_back(std::move(entry));
    }
    return s;
  }

  RunState resumed_state() {
    RunState s = read_run_state(layout_);
    if (s.job_sha256 != sha256_hex(loaded_->job.text)) {
      throw InputError({options_.job_path, 0, ""},
                       "differs from the job this run started with (" +
                           layout_.job_copy().string() + ")",
                       "resume with the same job file, or start a new run with --output");
    }
    // The files the job given now names, each against the content the run started with (the
    // paths recorded are only where they were; a run state from before relative paths holds
    // absolute ones, and is checked the same way).
    const JobSpec& job = loaded_->job;
    const std::string job_file = fs::absolute(options_.job_path).lexically_normal().string();
    std::vector<std::pair<std::string, std::string>> named = {{"units", job.map.units_path},
                                                              {"adjacency", job.map.adjacency_path}};
    if (loaded_->start) named.emplace_back("start plan", job.start);
    for (const auto& [role, path] : named) {
      const auto recorded = std::find_if(s.inputs.begin(), s.inputs.end(),
                                         [&](const InputFileEntry& e) { return e.role == role; });
      if (recorded == s.inputs.end()) {
        throw InputError({layout_.state_file().string(), 0, "inputs"},
                         "records no " + role + " file, but the job names " + path,
                         "resume with the job the run started with");
      }
      if (!fs::exists(path)) {
        throw InputError({path, 0, ""}, "is missing",
                         "restore the " + role + " file the run started with");
      }
      if (sha256_file_hex(path) != recorded->sha256) {
        throw InputError({path, 0, ""}, "has changed since the run started (SHA-256 differs)",
                         "restore the " + role + " file the run started with, or start a new "
                         "run with --output");
      }
      recorded->path = input_path_for_state(job_file, path);
    }
    for (auto& input : s.inputs) {
      if (input.role == "job") input.path = input_path_for_state(job_file, job_file);
    }
    s.job_path = job_file;
    // Each chain goes on from its snapshot; one that has stepped cannot start again from nothing.
    const std::string state_file = layout_.state_file().string();
    for (const auto& c : s.chains) {
      const std::string which = "chain " + std::to_string(c.index);
      if (c.snapshot.empty()) {
        if (c.steps == 0) continue;
        throw InputError({state_file, 0, "chains"},
                         which + " has taken " + std::to_string(c.steps) +
                             " steps but holds no snapshot to go on from",
                         "restore run-state.json from a backup, or start a new run with --output");
      }
      try {
        if (tempered()) {
          check_ladder_snapshot(c.snapshot, loaded_->graph, job.districts);
        } else {
          check_chain_snapshot(c.snapshot, loaded_->graph, job.districts);
        }
      } catch (const std::invalid_argument& e) {
        throw InputError({state_file, 0, "chains"}, which + ": " + e.what(),
                         "restore run-state.json from a backup, or start a new run with --output");
      }
    }
    // Another build may step the same snapshot to other plans: refuse it unless the user accepts
    // that, and then list it (a state from before builds were recorded is not checked).
    const BuildInfo here = this_build();
    if (!s.builds.empty() && !(s.builds.back() == here)) {
      std::string differences;
      for (const auto& d : build_differences(s.builds.back(), here)) {
        differences += (differences.empty() ? "" : "; ") + d;
      }
      if (!options_.allow_other_build) {
        throw InputError({state_file, 0, "builds"},
                         "the run was drawn by a build that could decide differently (" +
                             differences + ")",
                         "resume with the planmill build that drew it, or add "
                         "--allow-other-build to go on with this one (the run state then lists "
                         "both builds)");
      }
      spdlog::warn("resuming with another build ({}); run-state.json lists both", differences);
      s.builds.push_back(here);
    }
    // Every committed plan file must be there: the run's records so far are in them.
    for (const auto& f : s.files) {
      if (!fs::exists(layout_.resolve(f.file))) {
        throw InputError({layout_.resolve(f.file).string(), 0, ""}, "missing",
                         "the run state lists it; restore it from a backup, or start a new run "
                         "with --output");
      }
    }
    remove_unlisted_plan_files(layout_, s);
    return s;
  }

  // After every chain is built: a fresh run writes its folder, and the session is recorded.
  void begin_session() {
    if (state_.finished && !options_.until_converged) return;
    std::string encoded;
    on_root_then_agree(w_, [&] {
      if (fresh_) {
        if (replace_empty_run_) {
          spdlog::info("{} held a run that never reached a checkpoint; starting anew there",
                       layout_.root.string());
          fs::remove_all(layout_.plans_dir());
        }
        fs::create_directories(layout_.plans_dir());
        write_file_atomically(layout_.job_copy().string(), loaded_->job.text);
      }
      write_run_state(layout_, state_);
      encoded = encode_run_state(state_);
    });
    state_ = decode_run_state(broadcast_string(encoded));
  }

  void build_chains() {
    const std::uint64_t count = state_.chains.size();
    // The holders of a shared ladder get a communicator of their own. Every rank takes part in
    // every split, in ladder order, before anything can fail.
    std::vector<MPI_Comm> holders(count, MPI_COMM_NULL);
    for (std::uint64_t l = 0; tempered() && l < count; ++l) {
      const auto where = ladder_ranks(l, count, rungs(), w_.size);
      if (where.front() == where.back()) continue;
      const bool mine = std::find(where.begin(), where.end(), w_.rank) != where.end();
      MPI_Comm_split(MPI_COMM_WORLD, mine ? 0 : MPI_UNDEFINED, w_.rank, &holders[l]);
    }
    everywhere_then_agree([&] {
      const JobSpec& job = loaded_->job;
      const KernelSettings kernel = make_kernel_settings(job);
      for (const auto& entry : state_.chains) {
        LocalChain local;
        local.entry = entry;
        local.handles.assign(entry.recorded_rungs, SIZE_MAX);
        if (tempered()) {
          local.replica_ranks = ladder_ranks(entry.index, count, rungs(), w_.size);
          LadderSetup setup = make_ladder_setup(job, loaded_->graph, rules_, entry.index);
          setup.here.resize(rungs());
          for (std::size_t i = 0; i < rungs(); ++i) setup.here[i] = local.replica_ranks[i] == w_.rank;
          if (std::find(setup.here.begin(), setup.here.end(), true) == setup.here.end()) continue;
          local.home = local.replica_ranks.front();
          local.holders = std::exchange(holders[entry.index], MPI_COMM_NULL);
          local.own_energy.assign(rungs(), 0.0);
          local.energy.assign(rungs(), 0.0);
          local.ladder = std::make_unique<Ladder>(setup, std::vector<Plan>{start_plan(entry.index)});
          local.tune = job.tempering.tune;
          if (!entry.snapshot.empty()) local.ladder->restore(entry.snapshot);
          if (local.tune && local.ladder->steps() == 0 && state_.burn_in > 0) {
            local.ladder->start_tuning(std::min(state_.burn_in, state_.target_steps));
          }
        } else {
          if (chain_rank(entry.index, w_.size) != w_.rank) continue;
          local.home = w_.rank;
          ChainSetup setup{loaded_->graph, rules_, kernel, state_.seed, entry.index};
          local.chain = std::make_unique<Chain>(setup, start_plan(entry.index));
          if (!entry.snapshot.empty()) local.chain->restore(entry.snapshot);
        }
        chains_.push_back(std::move(local));
      }
      incoming_plan_.resize(loaded_->graph->unit_count());
    });
  }

  Plan start_plan(std::uint64_t chain_index) {
    const ChainStarts starts = loaded_->job.starts;
    if (loaded_->start && (starts == ChainStarts::given || (starts == ChainStarts::mixed && chain_index == 0)))
      return *loaded_->start;
    Rng rng = make_stream(state_.seed, kSeedPlanStreamBase + chain_index);
    return random_seed_plan(loaded_->graph, loaded_->job.districts, rules_, rng);
  }

  // ---- the loop ----
  enum Field : std::size_t {
    kStop, kCheckpointSignal, kCheckpointDue, kNextRound, kAccepted, kRecords,
    kRemaining, kProgressDue, kStepsTotal, kFailed, kFieldCount
  };
  // Rounds this long answer a signal promptly: mpiexec gives the ranks about a second after it
  // forwards SIGTERM, and a round (of ladders, which cannot stop mid-round) must end well within.
  static constexpr double kRoundSeconds = 0.25;

  RunOutcome loop() {
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

  std::uint64_t step_round(std::uint64_t round_steps) {
    return tempered() ? step_ladders(round_steps) : step_chains(round_steps);
  }

  // A step that throws (a setting the map outgrew) ends this rank's round; the round's agreement
  // then ends the run on every rank without a commit, so the last checkpoint stands.
  [[noreturn]] void end_on_step_error() {
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
  std::uint64_t step_chains(std::uint64_t round_steps) {
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
  std::uint64_t step_ladders(std::uint64_t round_steps) {
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

  void open_writer() {
    if (writer_) return;
    writer_file_ = RunLayout::plan_file_name(segment_, w_.rank);
    if (header_.unit_count == 0) {
      header_.unit_count = loaded_->graph->unit_count();
      header_.district_count = loaded_->job.districts;
      header_.job_text = loaded_->job.text;
      header_.adjacency = unit_adjacency(*loaded_->graph);
    }
    writer_ = std::make_unique<EnsembleWriter>(layout_.resolve(writer_file_).string(), header_);
  }

  std::size_t writer_handle(LocalChain& local, std::uint64_t rung) {
    std::size_t& handle = local.handles[rung];
    if (handle == SIZE_MAX) handle = writer_->add_chain(rung_record_index(local.entry.index, rung), names_);
    return handle;
  }

  void record_chain(LocalChain& local, std::uint64_t step) {
    open_writer();
    const ChainState& state = local.chain->state();
    compute_observables(*loaded_->graph, state, row_);
    // The units moved since the last record spare the writer a scan of the whole plan.
    writer_->record(writer_handle(local, 0), step, state.plan.assignment(), row_,
                    state.plan.changes());
    local.chain->clear_plan_changes();
    ++local.segment_records;
  }

  // The home rank records the plan on each recorded rung; a replica held elsewhere sends its plan
  // and observables there. (The target rung changes hands on swaps, so ladders' plans go without
  // the writer's change hint.)
  void record_ladder(LocalChain& local, std::uint64_t step) {
    const Ladder& ladder = *local.ladder;
    const bool home = local.home == w_.rank;
    if (home) open_writer();
    for (std::uint64_t r = 0; r < local.entry.recorded_rungs; ++r) {
      const std::size_t replica = ladder.replica_on(r);
      const int owner = local.replica_ranks[replica];
      std::span<const DistrictIndex> plan;
      if (owner == w_.rank) {
        const ChainState& state = ladder.replica(replica).state();
        compute_observables(*loaded_->graph, state, row_);
        plan = state.plan.assignment();
        if (!home) {
          MPI_Send(row_.data(), static_cast<int>(row_.size()), MPI_DOUBLE, local.home, kRecordTag,
                   MPI_COMM_WORLD);
          MPI_Send(plan.data(), static_cast<int>(plan.size()), MPI_UINT16_T, local.home, kRecordTag,
                   MPI_COMM_WORLD);
          continue;
        }
      } else if (home) {
        MPI_Recv(row_.data(), static_cast<int>(row_.size()), MPI_DOUBLE, owner, kRecordTag,
                 MPI_COMM_WORLD, MPI_STATUS_IGNORE);
        MPI_Recv(incoming_plan_.data(), static_cast<int>(incoming_plan_.size()), MPI_UINT16_T,
                 owner, kRecordTag, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
        plan = incoming_plan_;
      } else {
        continue;
      }
      writer_->record(writer_handle(local, r), step, plan, row_);
    }
    if (home) ++local.segment_records;
  }

  // Closes this rank's plan file, then rank 0 commits every rank's chains in one atomic write.
  // A final commit (how_ended not empty) also closes the session.
  void commit(const std::string& how_ended) {
    // First, as nothing can fail yet: the holders of a shared ladder add up their kernel counters.
    std::vector<StoredCounters> counters;
    for (auto& local : chains_) {
      counters.push_back(stored(local.counters()));
      if (local.holders != MPI_COMM_NULL) counters.back() = add_over(counters.back(), local.holders);
    }
    RunState part;
    everywhere_then_agree([&] {
      if (writer_) {
        for (std::size_t k = 0; k < chains_.size(); ++k) {
          for (const std::size_t handle : chains_[k].handles) {
            if (handle != SIZE_MAX) writer_->set_counters(handle, counters[k]);
          }
        }
        writer_->close();  // writes the file in one piece, fsynced
        writer_.reset();
        part.files.push_back({writer_file_, segment_, w_.rank, host_,
                              sha256_file_hex(layout_.resolve(writer_file_).string())});
      }
      const std::string now = utc_now_iso8601();
      for (std::size_t k = 0; k < chains_.size(); ++k) {
        LocalChain& local = chains_[k];
        ChainEntry& e = local.entry;
        e.steps = local.steps();
        e.counters = counters[k];
        e.snapshot = local.save();
        if (local.ladder) e.ladder = ladder_summary(*local.ladder).dump();
        e.last_checkpoint = now;
        if (local.segment_records > 0) {
          e.spans.push_back({writer_file_, local.segment_records});
          e.records += local.segment_records;
        }
        local.segment_records = 0;
        std::fill(local.handles.begin(), local.handles.end(), SIZE_MAX);
        part.chains.push_back(e);
      }
    });
    const auto parts = gather_strings(encode_run_state(part), w_);
    std::string encoded;
    on_root_then_agree(w_, [&] {
      fsync_path(layout_.plans_dir());
      // A shared ladder comes from each of its holders: the home rank's entry holds its records,
      // and the holders' snapshots combine into one.
      std::map<std::uint64_t, std::vector<std::string>> snapshots;
      for (std::size_t rank = 0; rank < parts.size(); ++rank) {
        const RunState from_rank = decode_run_state(parts[rank]);
        for (const auto& f : from_rank.files) state_.files.push_back(f);
        for (const auto& c : from_rank.chains) {
          snapshots[c.index].push_back(c.snapshot);
          if (home_rank(c.index) != static_cast<int>(rank)) continue;
          auto it = std::find_if(state_.chains.begin(), state_.chains.end(),
                                 [&](const ChainEntry& e) { return e.index == c.index; });
          *it = c;
        }
      }
      for (auto& e : state_.chains) {
        const auto& list = snapshots[e.index];
        if (list.size() > 1) e.snapshot = Ladder::combine_snapshots(list);
      }
      state_.checkpoints = segment_ + 1;
      state_.finished = how_ended == "finished";
      state_.stop_reason = how_ended;
      if (!how_ended.empty()) {
        state_.sessions.back().ended = utc_now_iso8601();
        state_.sessions.back().how_ended = how_ended;
      }
      write_run_state(layout_, state_);
      encoded = encode_run_state(state_);
    });
    state_ = decode_run_state(broadcast_string(encoded));
    ++segment_;
  }

  // After a block of --until-converged: diagnose the committed records on rank 0 and either stop
  // or extend every chain's target by one more block (nullopt: go on).
  std::optional<RunEnd> judge_block() {
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
  diagnose::ConvergenceReport diagnose_committed() const {
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
    return diagnose::assess_convergence(draws, loaded_->job.verdict);
  }

  // ---- progress ----
  void report_progress(const std::uint64_t* all, std::uint64_t steps_before,
                       Clock::time_point since) {
    const double seconds = std::chrono::duration<double>(Clock::now() - since).count();
    const std::uint64_t mine = total_steps_local() - steps_before;
    std::vector<std::uint64_t> per_rank(static_cast<std::size_t>(w_.size));
    MPI_Gather(&mine, 1, MPI_UINT64_T, per_rank.data(), 1, MPI_UINT64_T, 0, MPI_COMM_WORLD);
    if (!w_.root()) return;
    std::uint64_t sum = 0;
    std::string ranks;
    for (const auto n : per_rank) {
      sum += n;
      if (w_.size > 1) ranks += (ranks.empty() ? "" : " + ") + rate_text(static_cast<double>(n) / seconds);
    }
    const double rate = static_cast<double>(sum) / seconds;
    const double total = static_cast<double>(all[kStepsTotal] + all[kRemaining]);
    const double fraction = total > 0 ? static_cast<double>(all[kStepsTotal]) / total : 1.0;
    const double acceptance =
        all[kStepsTotal] ? static_cast<double>(all[kAccepted]) / static_cast<double>(all[kStepsTotal]) : 0;
    char line[512];
    std::snprintf(line, sizeof line, "%llu plans recorded, %s steps/s%s%s%s, acceptance %.1f%%, %s left",
                  static_cast<unsigned long long>(all[kRecords]), rate_text(rate).c_str(),
                  ranks.empty() ? "" : " (", ranks.c_str(), ranks.empty() ? "" : " per rank)",
                  100.0 * acceptance,
                  duration_text(static_cast<double>(all[kRemaining]) / rate).c_str());
    if (::isatty(STDERR_FILENO)) {
      constexpr int kWidth = 24;
      const int filled = static_cast<int>(fraction * kWidth);
      std::fprintf(stderr, "\r[%.*s%.*s] %3.0f%% %s\033[K", filled, "########################",
                   kWidth - filled, "------------------------", 100.0 * fraction, line);
      std::fflush(stderr);
      bar_shown_ = true;
    } else {
      spdlog::info("{:.0f}% {}", 100.0 * fraction, line);
    }
  }

  static std::string rate_text(double rate) {
    char text[32];
    if (rate >= 1e6) {
      std::snprintf(text, sizeof text, "%.2fM", rate / 1e6);
    } else if (rate >= 1e4) {
      std::snprintf(text, sizeof text, "%.1fk", rate / 1e3);
    } else {
      std::snprintf(text, sizeof text, "%.0f", rate);
    }
    return text;
  }

  RunOutcome outcome(RunEnd end, Clock::time_point started, std::uint64_t steps_at_start) {
    if (bar_shown_) std::fprintf(stderr, "\n");
    RunOutcome out;
    out.end = end;
    out.run_dir = layout_.root.string();
    for (const auto& c : state_.chains) out.records += c.records, out.steps += c.steps;
    const double seconds = std::chrono::duration<double>(Clock::now() - started).count();
    const std::uint64_t stepped = sum_over_ranks(total_steps_local() - steps_at_start);
    const std::size_t n = state_.chains.size();
    const std::string what =
        std::to_string(n) + (tempered() ? (n == 1 ? " ladder of " : " ladders of ") +
                                              std::to_string(rungs()) + " rungs"
                                        : (n == 1 ? " chain" : " chains"));
    char line[256];
    std::snprintf(line, sizeof line, "%s on %d rank%s: %llu plans recorded, %llu kernel steps in %s",
                  what.c_str(), w_.size, w_.size == 1 ? "" : "s",
                  static_cast<unsigned long long>(out.records),
                  static_cast<unsigned long long>(stepped), duration_text(seconds).c_str());
    out.summary = line;
    if (end == RunEnd::stopped_on_signal) {
      out.summary += "\nstopped on a signal after a checkpoint; continue with: planmill run " +
                     options_.job_path + " --output " + out.run_dir + " --resume";
      if (options_.until_converged) {
        out.summary += " --until-converged --max-steps " + std::to_string(options_.max_steps);
      }
    } else if (end == RunEnd::converged) {
      out.summary += "\nconverged: the stopping rule holds (every observable passes on the whole "
                     "record and on its later half)";
    } else if (end == RunEnd::budget_spent) {
      out.summary += "\nnot converged within --max-steps " + std::to_string(options_.max_steps) +
                     " steps per chain; failing:" + verdict_summary_ +
                     "\n  run longer, start more chains, or " +
                     (tempered() ? "add rungs to the ladders" : "use tempering");
    }
    return out;
  }

  static std::uint64_t sum_over_ranks(std::uint64_t local) {
    std::uint64_t all = 0;
    MPI_Allreduce(&local, &all, 1, MPI_UINT64_T, MPI_SUM, MPI_COMM_WORLD);
    return all;
  }
  std::uint64_t total_steps_local() const {
    std::uint64_t n = 0;
    for (const auto& c : chains_) n += c.counters().steps;
    return n;
  }
  std::uint64_t accepted_local() const {
    std::uint64_t n = 0;
    for (const auto& c : chains_) n += c.counters().outcomes[0];
    return n;
  }
  std::uint64_t records_local() const {
    std::uint64_t n = 0;
    for (const auto& c : chains_) {
      if (c.home == w_.rank) n += c.entry.records + c.segment_records;
    }
    return n;
  }
  std::uint64_t remaining_local() const {
    std::uint64_t n = 0;
    for (const auto& c : chains_) {
      const std::uint64_t s = c.steps();
      const std::uint64_t replicas = c.replicas_here();  // kernel steps, as counted
      n += s < state_.target_steps ? (state_.target_steps - s) * replicas : 0;
    }
    return n;
  }

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
  std::vector<std::string> names_;
  std::vector<double> row_;
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

}  // namespace

void install_run_signal_handlers() {
  struct sigaction stop {};
  stop.sa_handler = on_stop_signal;
  sigemptyset(&stop.sa_mask);
  sigaction(SIGTERM, &stop, nullptr);
  sigaction(SIGINT, &stop, nullptr);
  struct sigaction checkpoint {};
  checkpoint.sa_handler = on_checkpoint_signal;
  sigemptyset(&checkpoint.sa_mask);
  sigaction(SIGUSR1, &checkpoint, nullptr);
}

RunOutcome run_job(const RunOptions& options) {
  if (options.until_converged && options.max_steps == 0) {
    throw InputError({"", 0, "--max-steps"}, "--until-converged needs a step budget",
                     "add --max-steps N (steps per chain, burn-in included)");
  }
  ChainRunner runner(options, world());
  return runner.run();
}

}  // namespace planmill
