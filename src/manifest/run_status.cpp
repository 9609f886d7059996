// run_status: the committed state, the lock and the files' checks summed up in one condition.
#include "planmill/manifest/run_status.hpp"

#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <ostream>
#include <sstream>

#include "planmill/base/error.hpp"
#include "planmill/io/json_number.hpp"
#include "planmill/run/run_lock.hpp"

namespace planmill {
namespace fs = std::filesystem;

int exit_status_of(RunCondition condition) noexcept {
  switch (condition) {
    case RunCondition::finished: return 0;
    case RunCondition::unfinished: return 7;
    case RunCondition::damaged: return 8;
  }
  return 1;
}

const char* condition_name(RunCondition condition) noexcept {
  switch (condition) {
    case RunCondition::finished: return "finished";
    case RunCondition::unfinished: return "unfinished";
    case RunCondition::damaged: return "damaged";
  }
  return "?";
}

std::optional<std::time_t> parse_utc_iso8601(const std::string& text) {
  std::tm tm{};
  char zone = 0;
  if (std::sscanf(text.c_str(), "%4d-%2d-%2dT%2d:%2d:%2d%c", &tm.tm_year, &tm.tm_mon, &tm.tm_mday,
                  &tm.tm_hour, &tm.tm_min, &tm.tm_sec, &zone) != 7 ||
      zone != 'Z' || text.size() != 20)
    return std::nullopt;
  tm.tm_year -= 1900;
  tm.tm_mon -= 1;
  return timegm(&tm);
}

namespace {

void add_verdict(const RunReader& reader, const std::optional<std::vector<ChainProblem>>& problems,
                 RunStatus& s) {
  const bool any_records = std::any_of(s.chains.begin(), s.chains.end(),
                                       [](const ChainStatus& c) { return c.records > 0; });
  if (!any_records) {
    s.verdict_note = "no records yet";
    return;
  }
  try {
    const RunVerdictRule rule = verdict_rule_of_run(reader);
    RunDiagnosticsOptions options;
    options.judge = rule.judge;
    options.problems = problems;  // the chains verify() found damaged, when it ran
    RunDiagnostics d = diagnose_run(reader, rule.rule, options);
    d.rule_source = rule.source;
    s.verdict = std::move(d);
  } catch (const std::exception& e) {
    s.verdict_note = std::string("no verdict: ") + e.what();
  }
}

}  // namespace

RunStatus run_status(const std::string& run_dir, const RunStatusOptions& options) {
  RunStatus s;
  s.run_folder = run_dir;
  std::error_code ec;
  if (!fs::is_directory(run_dir, ec))
    throw InputError({run_dir, 0, ""}, "is not a folder", "give the run folder that 'planmill run' wrote");
  const RunLayout layout{run_dir};
  s.running_now = RunLock::holder(run_dir);
  if (!fs::exists(layout.state_file(), ec)) {
    if (!fs::exists(layout.job_copy(), ec))
      throw InputError({run_dir, 0, ""}, "holds no run (no run-state.json, no job.toml)",
                       "give the run folder that 'planmill run' wrote");
    s.condition = RunCondition::unfinished;
    s.why = s.running_now ? "running, before its first checkpoint"
                          : "stopped before its first checkpoint: nothing was committed; start it again";
    return s;
  }
  std::optional<RunReader> reader;
  try {
    reader.emplace(run_dir);
  } catch (const std::exception& e) {
    s.condition = RunCondition::damaged;
    s.why = std::string("the committed state cannot be read: ") + e.what();
    return s;
  }
  const RunState& state = reader->state();
  s.run_id = state.run_id;
  s.job_path = state.job_path;
  s.stop_reason = state.stop_reason;
  s.checkpoints = state.checkpoints;
  s.sessions = state.sessions.size();
  for (const ChainEntry& c : state.chains) {
    s.chains.push_back({c.index, c.steps, state.target_steps, c.records, c.last_checkpoint});
    s.last_checkpoint = std::max(s.last_checkpoint, c.last_checkpoint);  // ISO 8601 sorts as text
  }
  if (const auto at = parse_utc_iso8601(s.last_checkpoint)) {
    const std::time_t now = options.now != 0 ? options.now : std::time(nullptr);
    s.checkpoint_age = std::difftime(now, *at);
  }
  std::optional<std::vector<ChainProblem>> chain_problems;
  if (options.check_files) {
    s.files_checked = true;
    chain_problems = reader->verify();
    const std::vector<ChainProblem> rung_problems = reader->verify_rungs();
    for (const ChainProblem& p : *chain_problems) s.problems.push_back(p.what);
    for (const ChainProblem& p : rung_problems) s.problems.push_back(p.what);
  }
  const bool all_steps = std::all_of(s.chains.begin(), s.chains.end(), [](const ChainStatus& c) {
    return c.steps >= c.planned_steps;
  });
  if (!s.problems.empty()) {
    s.condition = RunCondition::damaged;
    s.why = std::to_string(s.problems.size()) + " problem(s) in the plan files; see 'planmill merge' for the record ranges";
  } else if (state.finished) {
    s.condition = RunCondition::finished;
    s.why = state.stop_reason.empty() || state.stop_reason == "finished" ? "every chain took its planned steps"
                                                                          : state.stop_reason;
  } else {
    s.condition = RunCondition::unfinished;
    s.why = s.running_now ? "running now"
            : all_steps   ? "every chain has its steps, but the run was not closed; --resume closes it"
                          : "stopped (" + (state.stop_reason.empty() ? std::string("killed, or still running elsewhere")
                                                                      : state.stop_reason) +
                              "); --resume continues it";
  }
  add_verdict(*reader, chain_problems, s);
  return s;
}

namespace {

std::string age_text(double seconds) {
  char text[64];
  if (seconds < 120) std::snprintf(text, sizeof text, "%.0f s ago", seconds);
  else if (seconds < 7200) std::snprintf(text, sizeof text, "%.0f min ago", seconds / 60);
  else if (seconds < 172800) std::snprintf(text, sizeof text, "%.1f h ago", seconds / 3600);
  else std::snprintf(text, sizeof text, "%.1f days ago", seconds / 86400);
  return text;
}

}  // namespace

void print_status(const RunStatus& s, std::ostream& out) {
  out << "run folder   " << s.run_folder << "\n";
  out << "condition    " << condition_name(s.condition) << ": " << s.why << "\n";
  if (s.running_now) out << "running now  " << *s.running_now << "\n";
  if (!s.run_id.empty()) out << "run id       " << s.run_id << "\n";
  if (!s.job_path.empty()) out << "job          " << s.job_path << "\n";
  if (s.sessions > 0) out << "sessions     " << s.sessions << ", checkpoints " << s.checkpoints << "\n";
  if (!s.last_checkpoint.empty())
    out << "checkpoint   " << s.last_checkpoint
        << (s.checkpoint_age ? " (" + age_text(*s.checkpoint_age) + ")" : std::string()) << "\n";
  if (!s.chains.empty()) {
    out << "chain        steps done / planned    records\n";
    for (const ChainStatus& c : s.chains) {
      char line[128];
      std::snprintf(line, sizeof line, "%-12llu %12llu / %-12llu %8llu\n",
                    static_cast<unsigned long long>(c.index), static_cast<unsigned long long>(c.steps),
                    static_cast<unsigned long long>(c.planned_steps),
                    static_cast<unsigned long long>(c.records));
      out << line;
    }
  }
  if (s.files_checked) out << "plan files   " << (s.problems.empty() ? "every check passed" : "damaged") << "\n";
  else out << "plan files   not checked (--skip-checks)\n";
  for (const std::string& p : s.problems) out << "  problem: " << p << "\n";
  if (s.verdict) {
    // The one verdict line; `planmill diagnose` gives the table and the suggestions.
    std::ostringstream full;
    print_verdict(*s.verdict, full);
    const std::string text = full.str();
    const std::size_t at = text.find("verdict: ");
    const std::size_t end = at == std::string::npos ? at : text.find('\n', at);
    out << "verdict      "
        << (at == std::string::npos ? std::string("see planmill diagnose")
                                    : text.substr(at + 9, end == std::string::npos ? end : end - at - 9))
        << " (so far; planmill diagnose " << s.run_folder << " for the table)\n";
  } else if (!s.verdict_note.empty()) {
    out << "verdict      none: " << s.verdict_note << "\n";
  }
}

nlohmann::ordered_json status_to_json(const RunStatus& s) {
  nlohmann::ordered_json j;
  j["run_folder"] = s.run_folder;
  j["condition"] = condition_name(s.condition);
  j["exit_status"] = exit_status_of(s.condition);
  j["why"] = s.why;
  j["running_now"] = s.running_now ? nlohmann::ordered_json(*s.running_now) : nlohmann::ordered_json();
  j["run_id"] = s.run_id;
  j["job"] = s.job_path;
  j["stop_reason"] = s.stop_reason;
  j["sessions"] = s.sessions;
  j["checkpoints"] = s.checkpoints;
  j["last_checkpoint"] = s.last_checkpoint;
  j["checkpoint_age_seconds"] = s.checkpoint_age ? json_number<nlohmann::ordered_json>(*s.checkpoint_age) : nlohmann::ordered_json();
  j["chains"] = nlohmann::ordered_json::array();
  for (const ChainStatus& c : s.chains)
    j["chains"].push_back({{"chain", c.index},
                           {"steps", c.steps},
                           {"planned_steps", c.planned_steps},
                           {"records", c.records},
                           {"last_checkpoint", c.last_checkpoint}});
  j["files_checked"] = s.files_checked;
  j["problems"] = s.problems;
  if (s.verdict) j["verdict"] = diagnostics_to_json(*s.verdict);
  else j["verdict"] = {{"none", s.verdict_note}};
  return j;
}

}  // namespace planmill
