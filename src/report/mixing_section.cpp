// What the chains show about mixing, in honest words: the verdict of diagnose::assess_convergence
// (through diagnose_run), its table, traces and autocorrelation of every judged observable, the
// kernel's target law, how the chains started; and a tempered run's ladders.
#include <sstream>

#include "planmill/diagnose/verdict.hpp"
#include "planmill/report/svg.hpp"
#include "planmill/temper/ladder_summary.hpp"
#include "report/sections.hpp"

namespace planmill::report {
namespace {

std::string target_law(const JobSpec& j) {
  switch (j.sampler.kernel) {
    case KernelKind::recombination:
      return "Spanning-tree recombination: its stationary law is not known in closed form (it is not the "
             "spanning-tree law), so the ensemble is a sample from the chain's own long-run law, whatever that is. "
             "Use it as a broad exploration of plans that satisfy the rules (docs/kernels.md).";
    case KernelKind::merge_split:
      return "Merge-split: a Metropolis-Hastings chain whose target is proportional to prod tau(P_i)^gamma * "
             "exp(-beta E(P)) over valid plans, here with gamma = " + format_number(j.sampler.gamma) +
             " and beta = " + format_number(j.sampler.beta) + " (docs/kernels.md).";
    case KernelKind::flip:
      return "Boundary flip: a Metropolis-Hastings chain whose target is proportional to exp(-beta E(P)) over valid "
             "plans, here with beta = " + format_number(j.sampler.beta) + " (docs/kernels.md).";
  }
  return {};
}

std::string starts(const JobSpec& j) {
  if (j.start == "random") return "Every chain started from its own random seed plan, so the chains started apart.";
  if (j.starts == ChainStarts::given)
    return "Every chain started from the same given plan (" + j.start + "): " + shared_start_note(j.start);
  if (j.starts == ChainStarts::random)
    return "Every chain started from its own random seed plan (the given plan " + j.start + " was not used as a start).";
  return "Chain 0 started from the given plan (" + j.start + "), every other chain from its own random seed plan.";
}

std::string num(double v) { return format_number(v, 4); }

}  // namespace

Section mixing_section(const RunFacts& f, const ReportOptions& o, std::vector<Figure>& figures) {
  Section s{"mixing", "Mixing of the chains", {}};
  const RunDiagnostics& d = f.diagnostics;
  const diagnose::VerdictRule& rule = d.rule;
  std::string words;
  if (d.pass()) {
    words = "No sign of poor mixing on the judged measures: with " + std::to_string(d.draws) +
            " records per chain, every judged observable has R-hat below " + num(rule.rhat_max) +
            " and bulk and tail ESS above " + num(rule.ess_min) +
            ", on the whole record and on its later half. This cannot show that the chains visited every region "
            "of plans: no diagnostic sees a region that no chain has reached.";
  } else {
    words = "The chains show signs of poor mixing, or too few records to tell (" + d.stop.summary() +
            (d.left_out.empty() ? std::string() : "; chains left out: " + std::to_string(d.left_out.size())) +
            "). Treat every figure and comparison below as provisional.";
  }
  s.body += paragraph(words, "verdict");
  // The one verdict line as `planmill diagnose` prints it (the failures it lists follow the table).
  std::ostringstream printed;
  print_verdict(d, printed);
  std::istringstream lines(printed.str());
  for (std::string line; std::getline(lines, line);)
    if (line.rfind("verdict:", 0) == 0) s.body += "<p class=\"note\"><code>" + escape_html(line) + "</code></p>\n";
  s.body += paragraph("Thresholds: R-hat < " + num(rule.rhat_max) + ", ESS > " + num(rule.ess_min) + ", at least " +
                          std::to_string(rule.min_records) + " records per chain (" + d.rule_source + "). Chains " +
                          std::to_string(d.chains.size()) + ", records used per chain " + std::to_string(d.draws) +
                          " (after the job's burn-in of " + std::to_string(f.reader->state().burn_in) + " steps).",
                      "note");
  for (const auto& n : d.notes) s.body += paragraph("Note: " + n, "note");
  for (const auto& l : d.left_out) s.body += paragraph("Left out: chain " + l.chain + ": " + l.why, "note");
  s.body += paragraph(starts(f.job));
  s.body += paragraph("Target law. " + target_law(f.job));

  std::vector<std::vector<std::string>> rows;
  for (const auto& q : d.verdict().table)
    rows.push_back({std::string(diagnose::judged_as(d.verdict(), q)), q.name, num(q.rhat), num(q.ess_bulk),
                    num(q.ess_tail), num(q.mean), num(q.mcse_mean), num(q.sd), q.note});
  s.body += table({"judged", "observable", "R-hat", "bulk ESS", "tail ESS", "mean", "+/- MCSE", "sd", "note"}, rows,
                  "Diagnostics on the whole record, worst first (Vehtari et al. 2021; docs/diagnostics.md)");
  for (const auto& r : d.verdict().remarks) s.body += paragraph(r.name + ": " + r.what, "note");
  for (const auto& fl : d.stop.deciding().failures)
    s.body += paragraph(fl.name + ": " + fl.problem + ". " + fl.suggestion, "note");

  s.body += "<h3>Traces and autocorrelation of the judged observables</h3>\n";
  std::size_t shown = 0;
  for (const auto& q : d.verdict().table) {
    if (diagnose::judged_as(d.verdict(), q) == "not judged") continue;
    const auto it = f.draws.find(q.name);
    if (it == f.draws.end()) continue;
    Figure trace = trace_figure(q.name, d.chains, it->second, o.trace_points);
    Figure acf = autocorrelation_figure(q.name, d.chains, it->second, o.max_lag);
    s.body += figure_html(trace) + figure_html(acf);
    figures.push_back(std::move(trace));
    figures.push_back(std::move(acf));
    ++shown;
  }
  if (shown == 0) s.body += paragraph("No observable was judged, so there is no trace to show.");
  return s;
}

Section ladder_section(const RunFacts& f) {
  Section s{"ladder", "Tempering ladders", {}};
  bool any = false;
  for (const auto& chain : f.reader->state().chains) {
    if (chain.ladder.empty()) continue;
    any = true;
    const nlohmann::json summary = nlohmann::json::parse(chain.ladder);
    const LadderReport ladder = describe_ladder(summary);
    s.body += "<h3>Ladder " + std::to_string(chain.index) + "</h3>\n" + paragraph(ladder.line);
    for (const auto& w : ladder.warnings) s.body += paragraph("Warning: " + w, "verdict");
    std::vector<std::vector<std::string>> rows;
    const auto& betas = summary.at("betas");
    for (std::size_t r = 0; r < betas.size(); ++r) {
      std::string attempts = "", acceptance = "";
      if (r + 1 < betas.size() && summary.at("pairs").size() > r) {
        const auto& p = summary["pairs"][r];
        attempts = p.at("accepted").dump() + " of " + p.at("attempts").dump();
        acceptance = p.at("acceptance").is_number() ? num(p["acceptance"].get<double>()) : "not measured";
      }
      const auto& up = summary.value("up_fraction", nlohmann::json::array());
      rows.push_back({std::to_string(r), betas[r].is_number() ? num(betas[r].get<double>()) : "?", attempts, acceptance,
                      r < up.size() && up[r].is_number() ? num(up[r].get<double>()) : ""});
    }
    s.body += table({"rung", "beta", "swaps with next rung", "acceptance", "up-moving fraction"}, rows);
    s.body += paragraph("Round trips (target to hottest and back): " + summary.value("round_trips", nlohmann::json()).dump() +
                        ", mean length " + summary.value("mean_round_trip_steps", nlohmann::json()).dump() + " steps.",
                        "note");
  }
  if (!any) return {};
  s.body = paragraph("Only the target rung (rung 0) belongs to the ensemble; hotter rungs help it cross between "
                     "groups of plans (docs/tempering.md). The usual aim is swap acceptance of roughly 20-40% between "
                     "neighbouring rungs (a rule of thumb) and many round trips.") + s.body;
  return s;
}

}  // namespace planmill::report
