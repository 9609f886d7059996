#include "planmill/manifest/run_diagnostics.hpp"

#include <toml++/toml.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <map>
#include <ostream>
#include <set>
#include <sstream>
#include <stdexcept>

#include "planmill/base/error.hpp"
#include "planmill/job/job.hpp"
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

json number(double v) { return std::isnan(v) ? json(nullptr) : json(v); }

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

RunDiagnostics diagnose_traces(const std::vector<std::string>& observable_names,
                               const std::vector<ChainTraces>& chains,
                               const diagnose::VerdictRule& rule, std::size_t burn_in) {
  const std::size_t width = observable_names.size();
  RunDiagnostics d;
  d.rule = rule;
  d.burn_in = burn_in;
  std::size_t fewest = chains.empty() ? 0 : SIZE_MAX, most = 0;
  for (const auto& c : chains) {
    if (width == 0 ? !c.rows.empty() : c.rows.size() % width != 0) {
      throw std::invalid_argument("chain " + std::to_string(c.chain) + " has " +
                                  std::to_string(c.rows.size()) + " values, not a multiple of " +
                                  std::to_string(width) + " observables");
    }
    const std::size_t n = width == 0 ? 0 : c.rows.size() / width;
    d.chains.push_back(c.chain);
    d.records.push_back(n);
    fewest = std::min(fewest, n);
    most = std::max(most, n);
  }
  d.draws = fewest > burn_in ? fewest - burn_in : 0;
  if (fewest != most) {
    d.notes.push_back("chains have between " + std::to_string(fewest) + " and " +
                      std::to_string(most) + " records; the common prefix of " +
                      std::to_string(fewest) + " records per chain is used");
  }
  if (fewest <= burn_in && !chains.empty()) {
    d.notes.push_back("--burn-in " + std::to_string(burn_in) +
                      " leaves no draws of the shortest chain (" + std::to_string(fewest) +
                      " records)");
  }

  // One draws x chains matrix per observable, judged by the stopping rule (the runner's too).
  const std::size_t cells = d.draws * chains.size();
  std::vector<double> values(cells * width);
  std::vector<diagnose::NamedDraws> quantities;
  quantities.reserve(width);
  for (std::size_t q = 0; q < width; ++q) {
    double* matrix = values.data() + q * cells;
    for (std::size_t c = 0; c < chains.size(); ++c) {
      const double* rows = chains[c].rows.data();
      for (std::size_t t = 0; t < d.draws; ++t)
        matrix[c * d.draws + t] = rows[(burn_in + t) * width + q];
    }
    quantities.push_back({observable_names[q], {{matrix, cells}, d.draws, chains.size()}});
  }
  d.stop = diagnose::check_stop(quantities, rule);
  d.verdict = d.stop.whole;
  return d;
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
  std::vector<LeftOutChain> left_out;
  for (const auto& [chain, p] : damaged) {
    left_out.push_back({chain, record_range(p) + " damaged: " + p.what});
  }
  std::vector<ChainTraces> traces;
  for (const auto chain : reader.chains()) {
    if (damaged.count(chain) != 0) continue;
    try {
      traces.push_back({chain, reader.read_observables(chain)});
    } catch (const StoreError& e) {
      left_out.push_back({chain, std::string("observables cannot be read: ") + e.what()});
    }
  }
  std::sort(left_out.begin(), left_out.end(),
            [](const auto& a, const auto& b) { return a.chain < b.chain; });
  RunDiagnostics d = diagnose_traces(reader.observable_names(), traces, rule, options.burn_in);
  d.left_out = std::move(left_out);
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
    if (source.empty()) return {{}, "defaults (no job text found in the run dir)"};
  }
  toml::table root;
  try {
    root = toml::parse(text, source);
  } catch (const toml::parse_error& e) {
    throw InputError({source, static_cast<std::size_t>(e.source().begin.line), ""},
                     "the run's job text is not valid TOML: " + std::string(e.description()),
                     "give --rhat-max and --ess-min on the command line");
  }
  if (!root.contains("verdict")) return {{}, "defaults (the job has no [verdict] section)"};
  const JobSpec job = parse_job_text(text, source);
  return {{job.verdict.rhat_max, job.verdict.ess_min, static_cast<std::size_t>(job.verdict.min_records)},
          "job [verdict] in " + source};
}

json diagnostics_to_json(const RunDiagnostics& d) {
  std::set<std::string> failing;
  json failures = json::array();
  for (const auto& f : d.verdict.failures) {
    failing.insert(f.name);
    failures.push_back({{"name", f.name}, {"problem", f.problem}, {"suggestion", f.suggestion}});
  }
  json observables = json::array();
  for (const auto& q : d.verdict.table) {
    observables.push_back({{"name", q.name},
                           {"passes", failing.count(q.name) == 0},
                           {"rhat", number(q.rhat)},
                           {"rhat_bulk", number(q.rhat_bulk)},
                           {"rhat_folded", number(q.rhat_folded)},
                           {"ess_bulk", number(q.ess_bulk)},
                           {"ess_tail", number(q.ess_tail)},
                           {"mcse_mean", number(q.mcse_mean)},
                           {"mcse_q05", number(q.mcse_q05)},
                           {"mcse_q95", number(q.mcse_q95)},
                           {"mean", number(q.mean)},
                           {"sd", number(q.sd)},
                           {"note", q.note}});
  }
  json remarks = json::array();
  for (const auto& r : d.verdict.remarks) remarks.push_back({{"name", r.name}, {"what", r.what}});
  json left_out = json::array();
  for (const auto& l : d.left_out) left_out.push_back({{"chain", l.chain}, {"why", l.why}});
  return {{"verdict", d.pass() ? "pass" : "fail"},
          {"rule",
           {{"rhat_max", d.rule.rhat_max},
            {"ess_min", d.rule.ess_min},
            {"min_records", d.rule.min_records},
            {"source", d.rule_source}}},
          {"burn_in", d.burn_in},
          {"chains", d.chains},
          {"records", d.records},
          {"draws_per_chain", d.draws},
          {"left_out", left_out},
          {"notes", d.notes},
          {"observables", observables},
          {"stopping_rule",
           {{"min_records", d.rule.min_records},
            {"records_per_chain", d.stop.records},
            {"whole", d.stop.whole.pass ? "pass" : "fail"},
            {"later_half_first_record", d.stop.later_first},
            {"later_half", d.stop.later.pass ? "pass" : "fail"},
            {"failed_part", d.stop.failed_part()},
            {"summary", d.stop.summary()}}},
          {"failures", failures},
          {"remarks", remarks},
          {"computed", utc_now_iso8601()}};
}

void print_verdict_table(const diagnose::Verdict& verdict, std::ostream& out) {
  std::vector<std::vector<std::string>> rows{
      {"quantity", "rhat", "ess_bulk", "ess_tail", "mcse_mean", "mean", "sd", "note"}};
  for (const auto& q : verdict.table) {
    rows.push_back({q.name, cell(q.rhat, "%.4f"), cell(q.ess_bulk, "%.0f"),
                    cell(q.ess_tail, "%.0f"), cell(q.mcse_mean, "%.3g"), cell(q.mean, "%.6g"),
                    cell(q.sd, "%.4g"), q.note});
  }
  std::vector<std::size_t> width(rows[0].size(), 0);
  for (const auto& r : rows) {
    for (std::size_t i = 0; i < r.size(); ++i) width[i] = std::max(width[i], r[i].size());
  }
  for (const auto& r : rows) {
    std::string line;
    for (std::size_t i = 0; i < r.size(); ++i) {
      const std::size_t pad = width[i] - r[i].size();
      if (i == 0 || i + 1 == r.size()) {
        line += r[i] + std::string(i + 1 == r.size() ? 0 : pad, ' ');  // text left-aligned
      } else {
        line += std::string(pad, ' ') + r[i];  // numbers right-aligned
      }
      if (i + 1 < r.size()) line += "  ";
    }
    while (!line.empty() && line.back() == ' ') line.pop_back();
    out << line << "\n";
  }
}

void print_verdict(const diagnose::Verdict& verdict, const diagnose::VerdictRule& rule,
                   std::ostream& out, std::size_t left_out) {
  for (const auto& r : verdict.remarks) out << "  " << r.name << ": " << r.what << "\n";
  if (left_out > 0) {
    out << "verdict: fail (" << left_out
        << " chain(s) left out because their records are damaged, see planmill merge; the other "
           "chains alone "
        << (verdict.pass ? "pass" : "fail on " + std::to_string(verdict.failures.size()) + " of " +
                                        std::to_string(verdict.table.size()) + " quantities")
        << ")\n";
  } else if (verdict.pass) {
    out << "verdict: pass (R-hat < " << rule.rhat_max << ", bulk and tail ESS > " << rule.ess_min
        << " for every judged quantity)\n";
    return;
  } else {
    out << "verdict: fail (" << verdict.failures.size() << " of " << verdict.table.size()
        << " quantities)\n";
  }
  for (const auto& f : verdict.failures) {
    out << "  " << f.name << ": " << f.problem << "\n    -> " << f.suggestion << "\n";
  }
}

void print_verdict(const diagnose::StopCheck& stop, const diagnose::VerdictRule& rule,
                   std::ostream& out, std::size_t left_out) {
  if (left_out > 0) {
    print_verdict(stop.whole, rule, out, left_out);
    return;
  }
  for (const auto& r : stop.whole.remarks) out << "  " << r.name << ": " << r.what << "\n";
  if (stop.pass()) {
    out << "verdict: pass (R-hat < " << rule.rhat_max << ", bulk and tail ESS > " << rule.ess_min
        << " for every judged quantity; " << stop.summary() << ")\n";
    return;
  }
  out << "verdict: fail (" << stop.summary() << ")\n";  // the summary names the failed part
  const diagnose::Verdict& shown = stop.whole.pass && stop.long_enough() ? stop.later : stop.whole;
  for (const auto& f : shown.failures) {
    out << "  " << f.name << ": " << f.problem << "\n    -> " << f.suggestion << "\n";
  }
  if (!stop.long_enough()) {
    out << "  -> run more steps: a verdict counts only from " << stop.min_records
        << " records per chain on ([verdict] min_records)\n";
  }
}

}  // namespace planmill
