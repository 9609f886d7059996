#include "planmill/manifest/run_diagnostics.hpp"

#include <toml++/toml.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <map>
#include <ostream>
#include <sstream>
#include <stdexcept>

#include "planmill/base/error.hpp"
#include "planmill/io/json_number.hpp"
#include "planmill/job/job.hpp"
#include "planmill/run/judged_draws.hpp"
#include "planmill/store/hdf5_handle.hpp"

namespace planmill {
namespace {

using json = nlohmann::ordered_json;

std::string cell(double v, const char* format) {
  if (std::isnan(v)) return "NaN";
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, format, v);
  return buffer;
}

std::string record_range(const ChainProblem& p) {
  const std::string last = p.last_record == UINT64_MAX ? "end" : std::to_string(p.last_record);
  return "records " + std::to_string(p.first_record) + ".." + last;
}

// The plan file every chain started from, when the run's job names one (empty for random starts or
// when the job copy cannot be read).
std::string shared_start_plan(const RunReader& reader) {
  const auto path = reader.layout().job_copy();
  std::ifstream in(path, std::ios::binary);
  if (!in) return {};
  std::ostringstream s;
  s << in.rdbuf();
  try {
    const JobSpec job = parse_job_text(s.str(), path.string());
    return job.start == "random" || job.starts != ChainStarts::given ? std::string() : job.start;
  } catch (const std::exception&) {
    return {};
  }
}

}  // namespace

std::string shared_start_note(const std::string& start_plan) {
  return "every chain started from the same given plan (" + start_plan +
         "): R-hat compares chains, so it cannot see chains that all stayed near that plan; "
         "confirm the verdict with a run whose other chains start from random seed plans "
         "(districts.starts = \"mixed\", the default, or \"random\")";
}

RunDiagnostics diagnose_run(const RunReader& reader, const diagnose::VerdictRule& rule,
                            const RunDiagnosticsOptions& options) {
  const std::vector<ChainProblem> problems = options.problems ? *options.problems : reader.verify();
  // Per damaged chain: the span from its first to its last damaged record, and the first cause.
  std::map<std::uint64_t, ChainProblem> damaged;
  for (const auto& p : problems) {
    auto [it, fresh] = damaged.emplace(p.chain_index, p);
    if (fresh) continue;
    it->second.first_record = std::min(it->second.first_record, p.first_record);
    it->second.last_record = std::max(it->second.last_record, p.last_record);
  }
  std::vector<std::pair<std::uint64_t, std::string>> left_out;
  for (const auto& [chain, p] : damaged) left_out.emplace_back(chain, record_range(p) + " damaged: " + p.what);
  diagnose::RecordedDraws draws;
  draws.observables = reader.observable_names();
  draws.dropped_records = options.dropped_records;
  for (const auto chain : reader.chains()) {
    if (damaged.count(chain) != 0) continue;
    try {
      draws.chains.push_back({std::to_string(chain), reader.read_observables(chain)});
    } catch (const StoreError& e) {
      left_out.emplace_back(chain, std::string("observables cannot be read: ") + e.what());
    }
  }
  std::sort(left_out.begin(), left_out.end());
  for (auto& [chain, why] : left_out) draws.left_out.push_back({std::to_string(chain), std::move(why)});
  JudgedDraws judged = judged_draws(draws, options.judge);
  RunDiagnostics d = diagnose::assess_convergence(judged.draws, rule);
  d.notes.insert(d.notes.end(), judged.notes.begin(), judged.notes.end());
  if (const std::string start = shared_start_plan(reader); !start.empty() && d.chains.size() > 1)
    d.notes.push_back(shared_start_note(start));
  return d;
}

RunVerdictRule verdict_rule_of_run(const RunReader& reader) {
  const RunLayout& layout = reader.layout();
  std::string text, source;
  if (std::filesystem::exists(layout.job_copy())) {
    source = layout.job_copy().string();
    std::ifstream in(source, std::ios::binary);
    if (!in)
      throw InputError({source, 0, ""}, "cannot read the run's job file", "check its permissions");
    std::ostringstream s;
    s << in.rdbuf();
    text = s.str();
  } else {
    for (const auto& f : reader.state().files) {
      try {
        const EnsembleReader file(layout.resolve(f.file).string());
        text = file.header().job_text;
        source = layout.resolve(f.file).string() + " (job text in the header)";
        break;
      } catch (const StoreError&) {
        continue;  // damaged files are reported by verify(); another one may hold the text
      }
    }
    if (source.empty()) return {{}, "defaults (no job text found in the run folder)", std::nullopt};
  }
  toml::table root;
  try {
    root = toml::parse(text, source);
  } catch (const toml::parse_error& e) {
    throw InputError({source, static_cast<std::size_t>(e.source().begin.line), ""},
                     "the run's job text is not valid TOML: " + std::string(e.description()),
                     "give --rhat-max and --ess-min on the command line");
  }
  if (!root.contains("verdict")) return {{}, "defaults (the job has no [verdict] section)", std::nullopt};
  const JobSpec job = parse_job_text(text, source);
  return {job.verdict, "job [verdict] in " + source, job.verdict_judge};
}

namespace {

// The fields of one observable, in the order both the text table and the JSON give them: how the
// chains mix first (what the verdict reads), then where the draws lie, each location with its
// Monte Carlo standard error. A field without a heading is in the JSON only.
struct Field {
  const char* group;    // the JSON object it sits in: "mixing" or "summary"
  const char* key;      // its JSON key
  const char* heading;  // its text column, or nullptr
  const char* format;   // printf format of its text cell
  double diagnose::ObservableDiagnostics::*value;
};

using Row = diagnose::ObservableDiagnostics;
constexpr Field kFields[] = {
    {"mixing", "rhat", "R-hat", "%.4f", &Row::rhat},
    {"mixing", "rhat_bulk", nullptr, nullptr, &Row::rhat_bulk},
    {"mixing", "rhat_folded", nullptr, nullptr, &Row::rhat_folded},
    {"mixing", "ess_bulk", "bulk ESS", "%.0f", &Row::ess_bulk},
    {"mixing", "ess_tail", "tail ESS", "%.0f", &Row::ess_tail},
    {"summary", "mean", "mean", "%.6g", &Row::mean},
    {"summary", "mcse_mean", "+/- MCSE", "%.3g", &Row::mcse_mean},
    {"summary", "sd", "sd", "%.4g", &Row::sd},
    {"summary", "mcse_q05", nullptr, nullptr, &Row::mcse_q05},
    {"summary", "mcse_q95", nullptr, nullptr, &Row::mcse_q95},
};

json observable_json(const diagnose::Verdict& verdict, const Row& q) {
  json entry{{"observable", q.name}, {"judged", diagnose::judged_as(verdict, q)}};
  for (const Field& f : kFields) entry[f.group][f.key] = json_number<json>(q.*f.value);
  entry["note"] = q.note;
  return entry;
}

const char* pass_fail(bool pass) { return pass ? "pass" : "fail"; }

}  // namespace

json diagnostics_to_json(const RunDiagnostics& d) {
  const diagnose::Verdict& verdict = d.verdict();
  json observables = json::array();
  for (const auto& q : verdict.table) observables.push_back(observable_json(verdict, q));
  json failures = json::array();
  for (const auto& f : d.stop.deciding().failures) {
    failures.push_back({{"observable", f.name}, {"problem", f.problem}, {"suggestion", f.suggestion}});
  }
  json remarks = json::array();
  for (const auto& r : verdict.remarks) remarks.push_back({{"observable", r.name}, {"what", r.what}});
  json left_out = json::array();
  for (const auto& l : d.left_out) left_out.push_back({{"chain", l.chain}, {"why", l.why}});
  return {{"verdict", pass_fail(d.pass())},
          {"rule",
           {{"rhat_max", d.rule.rhat_max},
            {"ess_min", d.rule.ess_min},
            {"min_records", d.rule.min_records},
            {"source", d.rule_source}}},
          {"dropped_records", d.dropped_records},
          {"chains", d.chains},
          {"records", d.records},
          {"draws_per_chain", d.draws},
          {"left_out", left_out},
          {"notes", d.notes},
          {"stopping_rule",
           {{"records_per_chain", d.stop.records},
            {"whole", pass_fail(d.stop.whole.pass)},
            {"later_half_first_record", d.stop.later_first},
            {"later_half", pass_fail(d.stop.later.pass)},
            {"failed_part", d.stop.failed_part()},
            {"summary", d.stop.summary()}}},
          {"observables", observables},
          {"failures", failures},
          {"remarks", remarks},
          {"computed", utc_now_iso8601()}};
}

void print_verdict_table(const diagnose::Verdict& verdict, std::ostream& out) {
  std::vector<std::string> heading{"judged", "observable"};
  for (const Field& f : kFields)
    if (f.heading != nullptr) heading.emplace_back(f.heading);
  heading.emplace_back("note");
  std::vector<std::vector<std::string>> rows{heading};
  for (const auto& q : verdict.table) {
    std::vector<std::string> row{std::string(diagnose::judged_as(verdict, q)), q.name};
    for (const Field& f : kFields)
      if (f.heading != nullptr) row.push_back(cell(q.*f.value, f.format));
    row.push_back(q.note);
    rows.push_back(std::move(row));
  }
  std::vector<std::size_t> width(heading.size(), 0);
  for (const auto& r : rows) {
    for (std::size_t i = 0; i < r.size(); ++i) width[i] = std::max(width[i], r[i].size());
  }
  for (const auto& r : rows) {
    std::string line;
    for (std::size_t i = 0; i < r.size(); ++i) {
      const std::size_t pad = width[i] - r[i].size();
      if (i < 2 || i + 1 == r.size()) {
        line += r[i] + std::string(pad, ' ');  // text left-aligned
      } else {
        line += std::string(pad, ' ') + r[i];  // numbers right-aligned
      }
      if (i + 1 < r.size()) line += "  ";
    }
    while (!line.empty() && line.back() == ' ') line.pop_back();
    out << line << "\n";
  }
}

void print_verdict(const RunDiagnostics& d, std::ostream& out) {
  const diagnose::StopCheck& stop = d.stop;
  for (const auto& r : stop.whole.remarks) out << "  " << r.name << ": " << r.what << "\n";
  if (!d.left_out.empty()) {
    out << "verdict: fail (" << d.left_out.size()
        << " chain(s) left out because their records are damaged, see planmill merge; the other "
           "chains alone "
        << (stop.pass() ? "pass" : "fail: " + stop.summary()) << ")\n";
  } else if (stop.pass()) {
    out << "verdict: pass (R-hat < " << d.rule.rhat_max << ", bulk and tail ESS > " << d.rule.ess_min
        << " for every judged observable; " << stop.summary() << ")\n";
    return;
  } else {
    out << "verdict: fail (" << stop.summary() << ")\n";  // the summary names the failed part
  }
  for (const auto& f : stop.deciding().failures) {
    out << "  " << f.name << ": " << f.problem << "\n    -> " << f.suggestion << "\n";
  }
  if (!stop.long_enough()) {
    out << "  -> run more steps: a verdict counts only from " << stop.min_records
        << " records per chain on ([verdict] min_records)\n";
  }
}

}  // namespace planmill
