#include "planmill/compare/outlier_test.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <limits>
#include <optional>

#include "planmill/base/error.hpp"
#include "planmill/io/file_hash.hpp"
#include "planmill/moves/kernel_kind.hpp"
#include "planmill/seed/plan_csv.hpp"

namespace planmill::compare {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// The same partition, whatever the district labels: one consistent relabelling maps a onto b.
bool same_partition(std::span<const DistrictIndex> a, std::span<const DistrictIndex> b, std::size_t k) {
  if (a.size() != b.size()) return false;
  constexpr DistrictIndex unset = std::numeric_limits<DistrictIndex>::max();
  std::vector<DistrictIndex> to(k, unset), from(k, unset);
  for (std::size_t u = 0; u < a.size(); ++u) {
    if (to[a[u]] == unset && from[b[u]] == unset) {
      to[a[u]] = b[u];
      from[b[u]] = a[u];
    }
    if (to[a[u]] != b[u]) return false;
  }
  return true;
}

// Why the chains did not start at `plan`, or empty (and `start` set to the run's start plan).
std::string why_not_started_at_plan(const RunReader& reader, const JobSpec& job, const Plan& plan,
                                    std::optional<Plan>& start) {
  if (job.start == "random" || job.starts == ChainStarts::random)
    return "the run's chains began at random seed plans, not at the compared plan";
  const auto recorded = std::find_if(reader.state().inputs.begin(), reader.state().inputs.end(),
                                     [](const InputFileEntry& e) { return e.role == "start plan"; });
  namespace fs = std::filesystem;
  std::error_code ec;
  if (recorded == reader.state().inputs.end() || !fs::exists(job.start, ec))
    return "the run's start plan " + job.start + " cannot be read to check that it is the compared plan";
  if (sha256_file_hex(job.start) != recorded->sha256)
    return "the run's start plan " + job.start + " has changed since the run started";
  start.emplace(read_plan_csv(job.start, plan.graph_handle(), plan.district_count()));
  if (!same_partition(start->assignment(), plan.assignment(), plan.district_count()))
    return "the run's chains began at " + job.start + ", which is another plan than the compared one";
  return {};
}

// Why the theorem does not apply to this run's chains, or empty.
std::string why_not_reversible(const RunReader& reader, const JobSpec& job) {
  if (job.tempering.enabled)
    return "the run is tempered: the target rung's trajectory alone is not a Markov chain (its plans come "
           "from swaps with other rungs), so the theorem does not apply; run the test without [tempering]";
  if (job.sampler.kernel == KernelKind::recombination)
    return "the run uses spanning-tree recombination, which is not known to be reversible with respect to a "
           "stated law, so the bound does not apply; run the test with kernel = \"merge-split\" or \"flip\"";
  if (reader.state().burn_in >= reader.state().record_every)
    return "the run did not record its first steps (burn_in = " + std::to_string(reader.state().burn_in) +
           " steps, record_every = " + std::to_string(reader.state().record_every) +
           "): the test needs the trajectory from the start plan; run it with burn_in = 0";
  return {};
}

std::vector<std::string> assumptions(const JobSpec& job) {
  return {
      "null hypothesis: the compared plan is a draw from the chain's target law (" +
          std::string(kernel_name(job.sampler.kernel)) +
          ", docs/kernels.md) under this run's rules; not 'the plan is typical of the ensemble'",
      "the chain is reversible with respect to that law (merge-split and flip are Metropolis-Hastings chains); "
      "no mixing is assumed",
      "the trajectory is every recorded plan from the start (every record_every-th step: P^m of a reversible P "
      "is reversible), and its length was fixed in advance; no burn-in is dropped",
      "the measures and tails were declared in advance ([compare] declared); no correction is made over "
      "several declared measures",
      "bound sqrt(2 eps) (Chikina, Frieze and Pegden, PNAS 114(11), 2017); ties and the plan itself count "
      "against the plan; several chains: Bonferroni, min(1, chains x least bound)",
  };
}

}  // namespace

const char* tail_name(OutlierTail tail) noexcept {
  switch (tail) {
    case OutlierTail::low: return "low";
    case OutlierTail::high: return "high";
    default: return "two-sided";
  }
}

DeclaredMeasure parse_declared(const std::string& entry, const std::string& job_file) {
  const std::size_t colon = entry.rfind(':');
  if (colon == std::string::npos) return {entry, OutlierTail::two_sided};
  const std::string suffix = entry.substr(colon + 1);
  DeclaredMeasure d{entry.substr(0, colon), OutlierTail::two_sided};
  if (suffix == "low") d.tail = OutlierTail::low;
  else if (suffix == "high") d.tail = OutlierTail::high;
  else
    throw InputError({job_file, 0, "compare.declared"}, "'" + entry + "' ends in an unknown tail ':" + suffix + "'",
                     "write the measure's name, or name:low or name:high to declare the tail of a one-sided test");
  return d;
}

OutlierShares outlier_shares(double x0, std::span<const double> after_x0) noexcept {
  OutlierShares s;
  s.states = after_x0.size() + 1;
  if (std::isnan(x0)) {
    s.low = s.high = kNaN;
    return s;
  }
  std::size_t low = 1, high = 1;  // X0 itself
  for (const double x : after_x0) {
    const bool nan = std::isnan(x);
    low += (nan || x <= x0) ? 1 : 0;
    high += (nan || x >= x0) ? 1 : 0;
  }
  s.low = static_cast<double>(low) / static_cast<double>(s.states);
  s.high = static_cast<double>(high) / static_cast<double>(s.states);
  return s;
}

double outlier_bound(double epsilon) noexcept {
  return std::isnan(epsilon) ? kNaN : std::min(1.0, std::sqrt(2.0 * epsilon));
}

double chain_p_bound(const OutlierShares& s, OutlierTail tail) noexcept {
  switch (tail) {
    case OutlierTail::low: return outlier_bound(s.low);
    case OutlierTail::high: return outlier_bound(s.high);
    default:
      if (std::isnan(s.low) || std::isnan(s.high)) return kNaN;
      return std::min(1.0, 2.0 * std::sqrt(2.0 * std::min(s.low, s.high)));
  }
}

double combine_chains(std::span<const double> p) noexcept {
  if (p.empty()) return kNaN;
  double least = 1.0;
  for (const double x : p) {
    if (std::isnan(x)) return kNaN;
    least = std::min(least, x);
  }
  return std::min(1.0, static_cast<double>(p.size()) * least);
}

OutlierSection outlier_test(const RunReader& reader, const JobSpec& job, const Plan& plan,
                            const std::vector<ChainProblem>& problems,
                            const std::vector<DeclaredMeasure>& declared, const PlanMeasure& measure) {
  OutlierSection out;
  out.assumptions = assumptions(job);
  const std::string how = "to run it, start the chains at the plan (districts.start = the plan's CSV, starts = "
                          "\"given\" or \"mixed\") with kernel merge-split or flip, burn_in = 0, no [tempering]";
  std::optional<Plan> start;
  if (const std::string why = why_not_started_at_plan(reader, job, plan, start); !why.empty()) {
    out.status = "epsilon-outlier test not run: " + why + "; " + how + ".";
    return out;
  }
  if (const std::string why = why_not_reversible(reader, job); !why.empty()) {
    out.status = "epsilon-outlier test not run: " + why + ".";
    return out;
  }
  std::vector<std::uint64_t> chains;
  for (const std::uint64_t c : reader.chains())
    if (job.starts == ChainStarts::given || c == 0) chains.push_back(c);
  std::vector<std::uint64_t> unsound;
  for (const ChainProblem& p : problems)
    if (p.rung == 0) unsound.push_back(p.chain_index);
  const std::uint64_t every = reader.state().record_every;
  std::vector<std::uint64_t> used;
  for (const std::uint64_t c : chains) {
    if (std::find(unsound.begin(), unsound.end(), c) != unsound.end()) {
      out.warnings.push_back("chain " + std::to_string(c) + " left out of the epsilon-outlier test: its records "
                             "fail verification");
      continue;
    }
    const std::vector<std::uint64_t> steps = reader.record_steps(c);
    bool spaced = true;
    for (std::size_t i = 0; i < steps.size(); ++i) spaced = spaced && steps[i] == (i + 1) * every;
    if (steps.empty()) {
      out.warnings.push_back("chain " + std::to_string(c) + " left out of the epsilon-outlier test: it has no records");
      continue;
    }
    if (!spaced) {
      out.warnings.push_back("chain " + std::to_string(c) + " left out of the epsilon-outlier test: its records "
                             "are not every " + std::to_string(every) + "-th step from the start");
      continue;
    }
    used.push_back(c);
  }
  if (reader.state().target_steps != job.sampler.steps)
    out.warnings.push_back("the run's length (" + std::to_string(reader.state().target_steps) +
                           " steps) is not the job's steps; if it was extended by --until-converged, its length "
                           "was chosen from the draws, which the theorem does not cover");
  if (used.empty()) {
    out.status = "epsilon-outlier test not run: no sound chain that started at the plan has records; " + how + ".";
    return out;
  }
  if (declared.empty()) {
    out.status = "epsilon-outlier test not run: the job declares no measures in advance ([compare] declared); the "
                 "test speaks only of declared measures.";
    return out;
  }
  out.ran = true;
  out.status = "epsilon-outlier test (no mixing needed): " + std::to_string(used.size()) +
               " chain(s) started at the plan, every record from the start plus the plan itself.";
  const std::map<std::string, double> plan_values = measure(*start);
  const std::vector<std::string>& names = reader.observable_names();
  std::vector<std::vector<double>> rows;
  for (const std::uint64_t c : used) rows.push_back(reader.read_observables(c));
  for (const DeclaredMeasure& d : declared) {
    MeasureOutlier m{d.name, d.tail, kNaN, {}, kNaN, {}};
    const auto column = std::find(names.begin(), names.end(), d.name);
    const auto value = plan_values.find(d.name);
    const std::string overall = ".sum_squared_departure";
    if (d.name.size() > overall.size() && d.name.ends_with(overall)) {
      m.note = "its centre, the ensemble's mean positions, comes from the draws themselves, so it is no fixed "
               "score of a plan and the theorem does not cover it; not tested";
      out.measures.push_back(std::move(m));
      continue;
    }
    if (column == names.end() || value == plan_values.end()) {
      m.note = "not a measure the run stores for every record; not tested";
      out.measures.push_back(std::move(m));
      continue;
    }
    m.plan = value->second;
    if (std::isnan(m.plan)) m.note = "the plan's value is not a number; not tested";
    const std::size_t col = static_cast<std::size_t>(column - names.begin());
    std::vector<double> trajectory, bounds;
    for (std::size_t i = 0; i < used.size(); ++i) {
      const std::size_t records = rows[i].size() / names.size();
      trajectory.resize(records);
      for (std::size_t r = 0; r < records; ++r) trajectory[r] = rows[i][r * names.size() + col];
      ChainOutlier c;
      c.chain = std::to_string(used[i]);
      c.shares = outlier_shares(m.plan, trajectory);
      c.bound_low = outlier_bound(c.shares.low);
      c.bound_high = outlier_bound(c.shares.high);
      c.p = chain_p_bound(c.shares, d.tail);
      bounds.push_back(c.p);
      m.chains.push_back(c);
    }
    m.p = combine_chains(bounds);
    out.measures.push_back(std::move(m));
  }
  return out;
}

}  // namespace planmill::compare
