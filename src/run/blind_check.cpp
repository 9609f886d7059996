// The blind check (planmill/run/blind_check.hpp): chains drawn again from their first state on a
// map whose group and vote columns are permuted, compared with the stored records.
#include "planmill/run/blind_check.hpp"

#include <algorithm>
#include <exception>
#include <filesystem>
#include <memory>
#include <span>
#include <stdexcept>
#include <string>
#include <utility>

#include "planmill/base/random.hpp"
#include "planmill/chain/chain.hpp"
#include "planmill/io/file_hash.hpp"
#include "planmill/job/job_rules.hpp"
#include "planmill/job/kernel_settings.hpp"
#include "planmill/job/loaded_job.hpp"
#include "planmill/run/build_info.hpp"
#include "planmill/temper/job_ladder.hpp"
#include "planmill/temper/ladder.hpp"
#include "run/start_plan.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

// The job's rules resolved on one map (the cap of county splits "fewest" found on it).
struct DrawnRules {
  RuleSet rules;
  std::optional<FewestSplits> fewest;
};

DrawnRules rules_on(const LoadedJob& loaded, const GraphHandle& graph) {
  if (graph == loaded.graph) return {loaded.rules, loaded.fewest};
  DrawnRules out;
  FewestSplits fewest;
  out.rules = resolve_rules(loaded.job, graph, &fewest);
  if (loaded.fewest) out.fewest = std::move(fewest);
  return out;
}

// A chain or ladder of the job drawn again from step 0, as the runner builds and steps it
// (run/session.cpp build_chains, run/runner.cpp step_chains / step_ladders).
class Redraw {
 public:
  Redraw(const LoadedJob& loaded, const GraphHandle& graph, const DrawnRules& drawn, const RunState& state,
         std::uint64_t chain)
      : burn_in_(state.burn_in), rules_(drawn.rules) {
    const JobSpec& job = loaded.job;
    Plan start = runner::chain_start_plan(job, graph, loaded.start, rules_, state.seed, chain,
                                          drawn.fewest ? &*drawn.fewest : nullptr);
    if (job.tempering.enabled) {
      ladder_ = std::make_unique<Ladder>(make_ladder_setup(job, graph, rules_, chain),
                                         std::vector<Plan>{std::move(start)});
      tune_ = job.tempering.tune;
      // The runner tunes from step 0 over the burn-in, capped by the job's steps.
      if (tune_ && burn_in_ > 0) ladder_->start_tuning(std::min(burn_in_, job.sampler.steps));
    } else {
      const ChainSetup setup{graph, rules_, make_kernel_settings(job), state.seed, chain};
      chain_ = std::make_unique<Chain>(setup, std::move(start));
    }
  }

  // Returns the step count after the step.
  std::uint64_t step() {
    if (chain_) {
      (void)chain_->step();
      return chain_->counters().steps;
    }
    ladder_->step();
    const std::uint64_t s = ladder_->steps();
    if (!tune_ && s == burn_in_) ladder_->reset_statistics();
    return s;
  }
  // The recorded plan: the chain's, or the one on the ladder's target rung.
  [[nodiscard]] std::span<const DistrictIndex> plan() const {
    if (chain_) return chain_->state().plan.assignment();
    return ladder_->replica(ladder_->replica_on(0)).state().plan.assignment();
  }
  [[nodiscard]] std::string save() const { return chain_ ? chain_->save() : ladder_->save(); }

 private:
  std::uint64_t burn_in_;
  bool tune_ = false;
  RuleSet rules_;
  std::unique_ptr<Chain> chain_;
  std::unique_ptr<Ladder> ladder_;
};

// The stored records a stretch is compared with.
struct Stored {
  std::vector<std::uint64_t> steps;
  std::vector<std::vector<DistrictIndex>> plans;
  std::uint64_t end = 0;          // the stretch's last step
  bool compare_final = false;     // end is the chain's committed step count
  const ChainEntry* entry = nullptr;
};

std::uint64_t units_differing(std::span<const DistrictIndex> a, std::span<const DistrictIndex> b) {
  std::uint64_t n = 0;
  for (std::size_t u = 0; u < a.size(); ++u) n += a[u] != b[u] ? 1 : 0;
  return n;
}

// Draws the stretch again on `graph` and compares every stored record in it, stopping at the first
// difference.
BlindStretch draw_stretch(const LoadedJob& loaded, const GraphHandle& graph, const DrawnRules& drawn,
                          const RunState& state, const Stored& stored) {
  BlindStretch out;
  out.chain = stored.entry->index;
  Redraw redraw(loaded, graph, drawn, state, out.chain);
  std::vector<DistrictIndex> previous(redraw.plan().begin(), redraw.plan().end());
  std::size_t next = 0;
  for (std::uint64_t s = 1; s <= stored.end; ++s) {
    if (redraw.step() != s) throw std::logic_error("blind check: the step count went astray");
    ++out.steps;
    if (next >= stored.steps.size() || stored.steps[next] != s) continue;
    const auto plan = redraw.plan();
    const auto& expected = stored.plans[next];
    ++out.records_compared;
    if (const std::uint64_t d = units_differing(plan, expected); d != 0) {
      out.result = "differed";
      out.differed_at_step = s;
      out.differed_at_record = next;
      out.units_differing = d;
      return out;
    }
    if (units_differing(plan, previous) != 0) ++out.records_changed;
    previous.assign(plan.begin(), plan.end());
    ++next;
  }
  if (stored.compare_final) {
    out.final_state_compared = true;
    if (redraw.save() != stored.entry->snapshot) {
      out.result = "differed";
      out.differed_at_step = stored.end;
      out.units_differing = 0;
    }
  }
  if (out.result.empty()) out.result = out.records_compared || out.final_state_compared ? "identical" : "nothing compared";
  return out;
}

// Why the job and map cannot be read as the run read them, or empty when they can.
std::string inputs_unlike_the_run(const RunState& state) {
  if (!fs::exists(state.job_path)) return "the job file " + state.job_path + " is missing";
  for (const auto& input : state.inputs) {
    const std::string path = resolve_input_path(state.job_path, input.path);
    if (!fs::exists(path)) return "the " + input.role + " file " + path + " is missing";
    if (sha256_file_hex(path) != input.sha256)
      return "the " + input.role + " file " + path + " has changed since the run started";
  }
  return {};
}

// The chains to draw again: `count` of them without replacement, in the order drawn.
std::vector<const ChainEntry*> drawn_chains(const RunState& state, std::uint64_t count) {
  std::vector<const ChainEntry*> all;
  for (const auto& c : state.chains) all.push_back(&c);
  Rng rng = make_stream(state.seed, kBlindChainStreamKey);
  const std::size_t n = std::min<std::size_t>(count, all.size());
  for (std::size_t i = 0; i < n; ++i) {  // a partial Fisher-Yates shuffle
    const std::size_t j = i + uniform_below(rng, static_cast<std::uint32_t>(all.size() - i));
    std::swap(all[i], all[j]);
  }
  all.resize(n);
  return all;
}

Stored stored_records(const RunReader& reader, const ChainEntry& entry, std::uint64_t records) {
  const RunState& state = reader.state();
  Stored s;
  s.entry = &entry;
  const auto steps = reader.record_steps(entry.index);
  const std::size_t n = std::min<std::size_t>(records, steps.size());
  s.steps.assign(steps.begin(), steps.begin() + static_cast<std::ptrdiff_t>(n));
  if (n > 0) {
    reader.for_each_plan(entry.index, 0, n - 1, [&](std::uint64_t, std::span<const DistrictIndex> p) {
      s.plans.emplace_back(p.begin(), p.end());
    });
  }
  // The bound: burn-in and R records' steps. A chain no longer than that is drawn to its end.
  const std::uint64_t bound = state.burn_in + records * state.record_every;
  s.compare_final = entry.steps <= bound && !entry.snapshot.empty();
  s.end = s.compare_final ? entry.steps : (n > 0 ? s.steps.back() : 0);
  return s;
}

}  // namespace

std::vector<UnitIndex> blind_permutation(std::uint64_t run_seed, std::size_t units) {
  std::vector<UnitIndex> source(units);
  for (std::size_t u = 0; u < units; ++u) source[u] = static_cast<UnitIndex>(u);
  // Sattolo (1986), "An algorithm to generate a random cyclic permutation", Information
  // Processing Letters 22: j below i (not up to i, as Fisher-Yates) gives a uniform n-cycle.
  Rng rng = make_stream(run_seed, kBlindPermutationStreamKey);
  for (std::size_t i = units; i-- > 1;) {
    const std::size_t j = uniform_below(rng, static_cast<std::uint32_t>(i));
    std::swap(source[i], source[j]);
  }
  return source;
}

BlindCheck check_blindness(const RunReader& reader, const BlindCheckOptions& options) {
  const RunState& state = reader.state();
  BlindCheck check;
  check.seed = state.seed;
  check.forced = options.force;
  check.records_per_stretch = options.records;
  check.build_matches_run = !state.builds.empty();
  const BuildInfo here = this_build();
  for (const auto& b : state.builds) check.build_matches_run = check.build_matches_run && b == here;
  const auto not_checked = [&](std::string why) {
    check.result = "not checked";
    check.why = std::move(why);
    return check;
  };
  if (state.pooled) return not_checked("a pool of runs: check each piece (planmill merge PIECE)");
  if (options.stretches == 0) return not_checked("--blind-stretches 0");
  try {
    if (const std::string why = inputs_unlike_the_run(state); !why.empty()) return not_checked(why);
    const LoadedJob loaded = load_and_check_job(state.job_path);
    if (sha256_hex(loaded.job.text) != state.job_sha256)
      return not_checked("the job file " + state.job_path + " differs from the run's");
    const RuleSet& rules = loaded.rules;
    check.rules_known = true;
    check.rules_read_group_columns = rules.reads_group_columns();
    if (check.rules_read_group_columns && !options.force) {
      check.result = "not applicable";
      check.why = "a [[rules.group_share]] rule reads a group column, so the plans drawn depend on it";
      return check;
    }
    const UnitGraph& map = *loaded.graph;
    std::vector<std::size_t> columns = map.group_columns();
    for (const auto& e : map.elections()) columns.insert(columns.end(), e.columns.begin(), e.columns.end());
    std::sort(columns.begin(), columns.end());
    columns.erase(std::unique(columns.begin(), columns.end()), columns.end());
    if (columns.empty()) return not_checked("the map has no group or vote columns to permute");
    for (const std::size_t c : columns) check.columns.push_back(map.count_column_name(c));

    const auto source = blind_permutation(state.seed, map.unit_count());
    std::string text;
    for (const UnitIndex u : source) text += std::to_string(u) + ' ';
    check.permutation_sha256 = sha256_hex(text);
    for (std::size_t u = 0; u < map.unit_count(); ++u) {
      const bool changed = std::any_of(columns.begin(), columns.end(), [&](std::size_t c) {
        return map.count_column(c)[u] != map.count_column(c)[source[u]];
      });
      check.units_with_changed_values += changed ? 1 : 0;
    }
    const GraphHandle permuted = share_graph(map.with_counts_permuted(columns, source));
    // Everything the rules derive is derived again on the permuted map (the fewest county splits
    // too), so a search that read the columns would show as a difference.
    const DrawnRules on_permuted = rules_on(loaded, permuted), as_run = rules_on(loaded, loaded.graph);

    bool differed = false, unreproduced = false;
    for (const ChainEntry* entry : drawn_chains(state, options.stretches)) {
      const Stored stored = stored_records(reader, *entry, options.records);
      BlindStretch stretch = draw_stretch(loaded, permuted, on_permuted, state, stored);
      check.steps_drawn += stretch.steps;
      if (stretch.result == "differed") {
        // The control: the same stretch on the map as it is. Failing there too (at or before the
        // same step), the difference is this build's, not the columns'.
        const BlindStretch control = draw_stretch(loaded, loaded.graph, as_run, state, stored);
        check.steps_drawn += control.steps;
        if (control.result == "differed" && *control.differed_at_step <= *stretch.differed_at_step)
          stretch.result = "not reproduced";
      }
      differed = differed || stretch.result == "differed";
      unreproduced = unreproduced || stretch.result == "not reproduced";
      check.stretches.push_back(std::move(stretch));
    }
    const bool compared = std::any_of(check.stretches.begin(), check.stretches.end(),
                                      [](const BlindStretch& s) { return s.result != "nothing compared"; });
    if (!compared) return not_checked("the chains drawn hold no records or snapshot to compare yet");
    check.result = differed ? "differed" : unreproduced ? "not reproduced" : "identical";
    if (unreproduced && !differed) {
      check.why = "this build does not draw the stored plans again even on the map as it is" +
                  std::string(check.build_matches_run ? "" : " (the run was drawn by another build)");
    }
  } catch (const std::exception& e) {
    check.stretches.clear();
    return not_checked(std::string("could not draw the chains again: ") + e.what());
  }
  return check;
}

}  // namespace planmill
