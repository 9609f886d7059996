#include "planmill/compare/report.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <ostream>
#include <sstream>

#include "compare/outlier_report.hpp"
#include "planmill/io/json_number.hpp"

namespace planmill::compare {

std::string number_text(double v, int digits) {
  if (std::isnan(v)) return "NA";
  char buffer[40];
  std::snprintf(buffer, sizeof buffer, "%.*g", digits, v);
  return buffer;
}

std::string percent_text(double share) {
  if (std::isnan(share)) return "NA";
  char buffer[40];
  std::snprintf(buffer, sizeof buffer, "%.2f%%", 100.0 * share);
  return buffer;
}

namespace {

using Json = nlohmann::ordered_json;

std::string num(double v, int digits = 4) { return number_text(v, digits); }
std::string percent(double share) { return percent_text(share); }

const char* tail_word(Tail t) { return t == Tail::upper ? "at or above" : "at or below"; }

// "X% of the ensemble's plans (MCSE Y) are at or above the plan's value V", or the bound.
std::string place_sentence(const ScalarComparison& s) {
  if (std::isnan(s.beyond)) return s.name + ": no comparison (" + std::string(s.ess_source) + ")";
  std::string text = s.name + ": the plan's value " + num(s.plan, 6) + "; ";
  if (s.beyond_every_draw) {
    text += std::string("no ensemble plan is ") + tail_word(s.tail) +
            " it: the ensemble's share there is below about " + percent(s.bound) + " (3 / ESS, ESS " +
            num(s.ess, 4) + ")";
  } else {
    text += percent(s.beyond) + " of the ensemble's plans are " + tail_word(s.tail) + " it (MCSE " +
            percent(s.mcse_beyond) + ", ESS " + num(s.ess, 4) + ")";
  }
  return text + "; ensemble median " + num(s.percentiles[3], 6) + ", central 95% " +
         num(s.percentiles[1], 6) + " to " + num(s.percentiles[5], 6) + ".";
}

const ScalarComparison* find_scalar(const CompareReport& r, const std::string& name) {
  for (const auto& s : r.scalars)
    if (s.name == name) return &s;
  for (const auto& v : r.vectors)
    if (v.overall.name == name) return &v.overall;
  return nullptr;
}

Json percentiles_json(const Percentiles& p) {
  Json j = Json::object();
  for (std::size_t i = 0; i < p.size(); ++i) j[num(100.0 * kPercentileProbs[i], 3)] = json_number<Json>(p[i]);
  return j;
}

Json scalar_json(const ScalarComparison& s) {
  return Json{{"name", s.name},
              {"plan", json_number<Json>(s.plan)},
              {"draws", s.finite},
              {"missing_draws", s.missing},
              {"below", json_number<Json>(s.below)},
              {"equal", json_number<Json>(s.equal)},
              {"above", json_number<Json>(s.above)},
              {"tail", s.tail == Tail::upper ? "upper" : "lower"},
              {"at_or_beyond", json_number<Json>(s.beyond)},
              {"beyond_every_draw", s.beyond_every_draw},
              {"bound", json_number<Json>(s.bound)},
              {"ess", json_number<Json>(s.ess)},
              {"ess_source", std::string(s.ess_source)},
              {"mcse", Json{{"below", json_number<Json>(s.mcse_below)},
                            {"equal", json_number<Json>(s.mcse_equal)},
                            {"above", json_number<Json>(s.mcse_above)},
                            {"at_or_beyond", json_number<Json>(s.mcse_beyond)}}},
              {"percentiles", percentiles_json(s.percentiles)},
              {"percentile_mcse", percentiles_json(s.percentile_mcse)}};
}

std::string csv_field(const std::string& s) {
  if (s.find_first_of(",\"\n") == std::string::npos) return s;
  std::string q = "\"";
  for (const char c : s) q += c == '"' ? std::string("\"\"") : std::string(1, c);
  return q + "\"";
}

std::string csv_num(double v) {
  if (std::isnan(v)) return "";
  char buffer[40];
  std::snprintf(buffer, sizeof buffer, "%.17g", v);
  return buffer;
}

void csv_scalar_row(std::ostringstream& out, const char* kind, const ScalarComparison& s) {
  out << kind << ',' << csv_field(s.name) << ",," << csv_num(s.plan) << ',' << csv_num(s.below) << ','
      << csv_num(s.equal) << ',' << csv_num(s.above) << ',' << csv_num(s.mcse_below) << ','
      << csv_num(s.mcse_equal) << ',' << csv_num(s.mcse_above) << ',' << csv_num(s.ess) << ','
      << csv_num(s.bound);
  for (const double p : s.percentiles) out << ',' << csv_num(p);
  out << ",," << outlier_csv_blank() << "\n";
}

}  // namespace

Json filters_json(const std::vector<FilterCount>& filters, const std::string& line) {
  Json applied = Json::array();
  for (const FilterCount& f : filters) applied.push_back({{"filter", f.filter}, {"removed", f.removed}});
  return Json{{"applied", applied}, {"text", line.empty() ? "none" : line}};
}

const std::string& caution() {
  static const std::string text =
      "Caution: the ensemble is a baseline under the rules this run states, not a finding of intent; "
      "legal conclusions belong to counsel and the courts of the jurisdiction.";
  return text;
}

std::string band_note(double plan_deviation, double plan_range, double tolerance, double range_allowed) {
  const bool deviation_loose = tolerance > 0.0 && 2.0 * plan_deviation <= tolerance;
  const bool range_loose = range_allowed > 0.0 && 2.0 * plan_range <= range_allowed;
  if (!deviation_loose && !range_loose) return "";
  const auto pct = [](double x) { return number_text(100.0 * x, 3) + "%"; };
  const double factor = deviation_loose ? tolerance / std::max(plan_deviation, 1e-12)
                                        : range_allowed / std::max(plan_range, 1e-12);
  return "The ensemble's population band is much looser than the plan's: the run allows every district within "
         "+/-" + pct(tolerance) + " of the ideal and an overall range up to " + pct(range_allowed) +
         ", but the plan's largest deviation is " + pct(plan_deviation) + " and its overall range " + pct(plan_range) +
         " (" + (factor >= 1e6 ? std::string("over a million") : number_text(factor, 3)) +
         " times looser). Measures that move with population balance are compared with plans its drafters "
         "could not have drawn; for a like-for-like baseline run with rules.population_tolerance near " +
         number_text(std::max(plan_deviation, 1e-6), 3) + " (or rules.population_range_max near " +
         number_text(std::max(plan_range, 1e-6), 3) + ").";
}

std::vector<std::string> summary(const CompareReport& r) {
  std::vector<std::string> lines;
  if (!r.population_band.empty()) lines.push_back(r.population_band);
  if (r.declared.empty()) {
    lines.push_back(
        "The job declares no measures in advance ([compare] declared), so the summary gives only the "
        "overall statistics; the tables list every measure, not chosen for the summary.");
  }
  for (const std::string& name : r.declared) {
    if (const ScalarComparison* s = find_scalar(r, name)) {
      lines.push_back(place_sentence(*s));
    } else {
      lines.push_back(name + ": declared in advance but the run has not stored it, so it is not compared.");
    }
  }
  for (const auto& v : r.vectors) {
    std::size_t out95 = 0, out99 = 0;
    for (const auto& p : v.positions) {
      out95 += p.outside95 ? 1 : 0;
      out99 += p.outside99 ? 1 : 0;
    }
    lines.push_back(place_sentence(v.overall) + " Positions outside the central 95%: " +
                    std::to_string(out95) + " of " + std::to_string(v.positions.size()) +
                    "; outside 99%: " + std::to_string(out99) + ".");
  }
  return lines;
}

void print_report(const CompareReport& r, std::ostream& out) {
  out << "plan " << r.plan_file << " against run " << r.run_dir << "\n";
  if (!r.plan_reading.empty()) out << "plan: " << r.plan_reading << "\n";
  out << "ensemble: " << r.chains.size() << " chains (";
  for (std::size_t i = 0; i < r.chains.size(); ++i)
    out << (i ? ", " : "") << r.chains[i] << ": " << r.records[i] << " records";
  out << "), " << r.draws << " records used per chain after the job's burn-in of " << r.burn_in_steps
      << " steps and " << r.dropped_records << " dropped records\n";
  out << "filters (--keep): " << (r.filter_line.empty() ? "none" : r.filter_line) << "\n";
  out << r.verdict_line;
  if (!r.verdict_pass)
    out << "WARNING: the ensemble has not passed the convergence verdict; its shares and percentiles may "
           "not describe the distribution the rules define. Run longer before relying on them.\n";
  for (const auto& w : r.warnings) out << "warning: " << w << "\n";
  if (!r.not_stored.empty()) {
    out << "not stored by the run, so not compared:";
    for (const auto& n : r.not_stored) out << " " << n;
    out << "\n";
  }
  out << "\nscalar measures (shares of ensemble draws below / equal / above the plan; MCSE from the ESS of "
         "\"at or beyond the plan\")\n";
  char line[512];
  std::snprintf(line, sizeof line, "%-40s %12s %9s %9s %9s %9s %8s %11s %11s %11s %11s %11s\n", "measure", "plan",
                "below", "equal", "above", "MCSE", "ESS", "p2.5", "p25", "p50", "p75", "p97.5");
  out << line;
  auto row = [&](const ScalarComparison& s) {
    std::string beyond = s.beyond_every_draw ? "<" + percent(s.bound) : percent(s.mcse_beyond);
    std::snprintf(line, sizeof line, "%-40s %12s %9s %9s %9s %9s %8s %11s %11s %11s %11s %11s\n", s.name.c_str(),
                  num(s.plan, 6).c_str(), percent(s.below).c_str(), percent(s.equal).c_str(),
                  percent(s.above).c_str(), beyond.c_str(), num(s.ess, 4).c_str(), num(s.percentiles[1], 5).c_str(),
                  num(s.percentiles[2], 5).c_str(), num(s.percentiles[3], 5).c_str(),
                  num(s.percentiles[4], 5).c_str(), num(s.percentiles[5], 5).c_str());
    out << line;
  };
  for (const auto& s : r.scalars) row(s);
  for (const auto& v : r.vectors) row(v.overall);
  for (const auto& v : r.vectors) {
    out << "\n" << v.name << " by sorted position (* outside the central 95%, ** outside 99%)\n";
    for (std::size_t j = 0; j < v.positions.size(); ++j) {
      const PositionComparison& p = v.positions[j];
      std::snprintf(line, sizeof line, "%5zu %10s %-2s  p0.5 %9s  p2.5 %9s  p50 %9s  p97.5 %9s  p99.5 %9s\n", j + 1,
                    num(p.plan, 5).c_str(), p.outside99 ? "**" : p.outside95 ? "*" : "",
                    num(p.percentiles[0], 5).c_str(), num(p.percentiles[1], 5).c_str(),
                    num(p.percentiles[3], 5).c_str(), num(p.percentiles[5], 5).c_str(),
                    num(p.percentiles[6], 5).c_str());
      out << line;
    }
  }
  out << "\nsummary (measures declared in advance and the overall statistics only):\n";
  for (const auto& s : summary(r)) out << "  " << s << "\n";
  print_outlier_section(r.outlier, out);
  out << "\n" << caution() << "\n";
}

Json report_json(const CompareReport& r) {
  Json j;
  j["caution"] = caution();
  j["run_dir"] = r.run_dir;
  j["plan_file"] = r.plan_file;
  j["plan_reading"] = r.plan_reading;
  Json chains = Json::array();
  for (std::size_t i = 0; i < r.chains.size(); ++i) chains.push_back({{"chain", r.chains[i]}, {"records", r.records[i]}});
  j["ensemble"] = {{"chains", chains},
                   {"burn_in_steps", r.burn_in_steps},
                   {"dropped_records", r.dropped_records},
                   {"records_used_per_chain", r.draws}};
  j["filters"] = filters_json(r.filters, r.filter_line);
  j["verdict"] = {{"pass", r.verdict_pass}, {"text", r.verdict_line}};
  j["warnings"] = r.warnings;
  j["not_stored"] = r.not_stored;
  j["declared"] = r.declared;
  j["summary"] = summary(r);
  Json scalars = Json::array();
  for (const auto& s : r.scalars) scalars.push_back(scalar_json(s));
  j["scalars"] = scalars;
  Json vectors = Json::array();
  for (const auto& v : r.vectors) {
    Json positions = Json::array();
    for (std::size_t i = 0; i < v.positions.size(); ++i) {
      const PositionComparison& p = v.positions[i];
      positions.push_back({{"position", i + 1},
                           {"plan", json_number<Json>(p.plan)},
                           {"mean", json_number<Json>(v.mean[i])},
                           {"below", json_number<Json>(p.below)},
                           {"above", json_number<Json>(p.above)},
                           {"outside95", p.outside95},
                           {"outside99", p.outside99},
                           {"percentiles", percentiles_json(p.percentiles)}});
    }
    vectors.push_back({{"name", v.name}, {"positions", positions}, {"overall", scalar_json(v.overall)}});
  }
  j["sorted_vectors"] = vectors;
  j["outlier_test"] = outlier_json(r.outlier);
  return j;
}

std::string report_csv(const CompareReport& r) {
  std::ostringstream out;
  out << "# " << caution() << "\n";
  out << "# Filters (--keep): " << (r.filter_line.empty() ? "none" : r.filter_line) << "\n";
  out << outlier_csv_status(r.outlier);
  out << "kind,measure,position,plan,below,equal,above,mcse_below,mcse_equal,mcse_above,ess,bound";
  for (const double p : kPercentileProbs) out << ",p" << num(100.0 * p, 3);
  out << ",outside95,outside99" << outlier_csv_columns() << "\n";
  for (const auto& s : r.scalars) csv_scalar_row(out, "scalar", s);
  for (const auto& v : r.vectors) {
    csv_scalar_row(out, "overall", v.overall);
    for (std::size_t i = 0; i < v.positions.size(); ++i) {
      const PositionComparison& p = v.positions[i];
      out << "position," << csv_field(v.name) << ',' << i + 1 << ',' << csv_num(p.plan) << ','
          << csv_num(p.below) << ",," << csv_num(p.above) << ",,,,,";
      for (const double q : p.percentiles) out << ',' << csv_num(q);
      out << ',' << (p.outside95 ? 1 : 0) << ',' << (p.outside99 ? 1 : 0) << outlier_csv_blank() << "\n";
    }
  }
  out << outlier_csv_rows(r.outlier, kPercentileProbs.size() + 10);
  return out.str();
}

}  // namespace planmill::compare
