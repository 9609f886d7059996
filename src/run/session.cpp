// The session's start: the job loaded and checked, the run state made new or resumed (and
// checked against the inputs, the snapshots and the build), the run folder written, and this
// rank's chains and ladders built from their snapshots or seed plans.
#include "run/chain_runner.hpp"
#include "run/start_plan.hpp"

#include <spdlog/spdlog.h>

#include <algorithm>
#include <cctype>
#include <filesystem>
#include <stdexcept>
#include <utility>

#include "planmill/chain/snapshot_check.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/io/file_hash.hpp"
#include "planmill/job/job_rules.hpp"
#include "planmill/job/kernel_settings.hpp"
#include "planmill/run/build_info.hpp"
#include "planmill/run/judged_draws.hpp"
#include "planmill/run/observables.hpp"
#include "planmill/temper/job_ladder.hpp"
#include "planmill/version.hpp"

namespace planmill::runner {
namespace {

namespace fs = std::filesystem;

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

}  // namespace

void ChainRunner::prepare() {
  everywhere_then_agree([&] {
    loaded_ = std::make_unique<LoadedJob>(load_and_check_job(options_.job_path));
    rules_ = loaded_->rules;
    measure_spec_ = loaded_->measures;
    const MeasureEvaluator probe(loaded_->graph, loaded_->job.districts, measure_spec_);
    names_ = observable_names(*loaded_->graph, rules_, probe);
    sorted_names_ = probe.vector_names();
    measures_text_ = measures_json(*loaded_->graph, rules_, probe, loaded_->fewest ? &*loaded_->fewest : nullptr);
    check_judged_names(loaded_->job, names_);
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
  everywhere_then_agree([&] {
    // A run drawn by a build that recorded other observables cannot be continued in the same files.
    if (state_.observable_names != names_ || state_.sorted_names != sorted_names_)
      throw InputError({layout_.state_file().string(), 0, "observables"},
                       "the run records other observables than this build would",
                       "resume with the planmill build that started the run, or start a new run with --output");
  });
  row_.assign(names_.size(), 0.0);
  sorted_.assign(sorted_names_.size() * loaded_->job.districts, 0.0);
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

// The state of a run not yet begun: nothing is written until every chain is built.
RunState ChainRunner::new_state() {
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
  s.observable_names = names_;
  s.sorted_names = sorted_names_;
  s.measures_json = measures_text_;
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

RunState ChainRunner::resumed_state() {
  RunState s = read_run_state(layout_);
  if (s.pooled) {
    throw InputError({layout_.state_file().string(), 0, "pooled"},
                     "is a pool of runs (planmill pool), which is read, never resumed",
                     "resume the piece that needs it; pool the pieces again afterwards");
  }
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
void ChainRunner::begin_session() {
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

void ChainRunner::build_chains() {
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
      local.measures.emplace(loaded_->graph, job.districts, measure_spec_);
      chains_.push_back(std::move(local));
    }
    incoming_plan_.resize(loaded_->graph->unit_count());
  });
}

Plan ChainRunner::start_plan(std::uint64_t chain_index) {
  return chain_start_plan(loaded_->job, loaded_->graph, loaded_->start, rules_, state_.seed, chain_index,
                          loaded_->fewest ? &*loaded_->fewest : nullptr);
}

}  // namespace planmill::runner
