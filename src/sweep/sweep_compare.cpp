// Each setting's run read into bands of its measures; the CSV and JSON of the comparison.
#include "planmill/sweep/sweep_compare.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <sstream>

#include "planmill/base/error.hpp"
#include "planmill/compare/run_comparison.hpp"
#include "planmill/io/json_number.hpp"
#include "planmill/manifest/run_diagnostics.hpp"
#include "planmill/manifest/run_status.hpp"
#include "planmill/report/figures.hpp"
#include "planmill/run/run_reader.hpp"

namespace planmill::sweep {
namespace {

namespace fs = std::filesystem;

// The scalar observables a sweep compares: seats, population deviation, compactness, splits.
bool compared(const std::string& name) {
  return (name.rfind("election.", 0) == 0 && name.find(".seats.") != std::string::npos) ||
         name == "population_deviation" || name == "compactness.cut_edges" ||
         name == "compactness.polsby_popper_mean" || name == "splits.counties_split" ||
         name == "splits.municipalities_split";
}

MeasureBand band_of(std::string name, std::vector<double> values) {
  std::erase_if(values, [](double v) { return !std::isfinite(v); });
  std::sort(values.begin(), values.end());
  MeasureBand b;
  b.name = std::move(name);
  b.draws = values.size();
  b.median = quantile_type7(values, 0.5);
  b.low = quantile_type7(values, kBandLow);
  b.high = quantile_type7(values, kBandHigh);
  return b;
}

void read_measures(SettingSummary& s) {
  const RunReader reader(s.setting.run);
  const RunVerdictRule rule = verdict_rule_of_run(reader);
  RunDiagnosticsOptions how;
  how.problems = reader.verify();
  how.judge = rule.judge;
  const RunDiagnostics d = diagnose_run(reader, rule.rule, how);
  if (d.draws == 0 || d.chains.empty()) {
    s.verdict = "none";
    s.verdict_line = "no chain has records to judge yet";
    return;
  }
  s.verdict = d.pass() ? "pass" : "fail";
  std::stringstream text;
  print_verdict(d, text);
  for (std::string line; std::getline(text, line);)
    if (line.rfind("verdict:", 0) == 0) s.verdict_line = line;

  std::vector<std::uint64_t> chains;
  for (const std::string& c : d.chains) chains.push_back(std::stoull(c));
  const std::size_t first = d.dropped_records, n = d.draws;
  const std::vector<std::string>& names = reader.observable_names();
  std::vector<std::vector<double>> pooled(names.size());
  for (const std::uint64_t c : chains) {
    const std::vector<double> rows = reader.read_observables(c);
    for (std::size_t col = 0; col < names.size(); ++col)
      if (compared(names[col]))
        for (std::size_t r = first; r < first + n; ++r) pooled[col].push_back(rows[r * names.size() + col]);
  }
  for (std::size_t col = 0; col < names.size(); ++col)
    if (compared(names[col])) s.measures.push_back(band_of(names[col], std::move(pooled[col])));

  std::vector<std::string> groups;
  for (const std::string& v : reader.sorted_names())
    if (v.rfind("group.", 0) == 0) groups.push_back(v);
  const std::size_t k = reader.district_count();
  for (const compare::VectorTable& t : compare::read_sorted_vectors(reader, chains, first, n, k, groups))
    for (std::size_t j = 0; j < t.positions; ++j) {
      std::vector<double> at(t.chains * t.draws);
      for (std::size_t i = 0; i < at.size(); ++i) at[i] = t.values[i * t.positions + j];
      s.measures.push_back(band_of(t.name + ".position_" + std::to_string(j + 1), std::move(at)));
    }
}

SettingSummary summarise(const SweepSetting& setting) {
  SettingSummary s;
  s.setting = setting;
  if (!fs::exists(fs::path(setting.run) / "run-state.json")) {
    s.status = "not run", s.verdict = "none", s.verdict_line = "the setting has not been run";
    return s;
  }
  const RunStatus status = run_status(setting.run, {.check_files = false});
  s.status = condition_name(status.condition);
  if (status.condition == RunCondition::damaged) {
    s.verdict = "none", s.verdict_line = "the run is damaged: " + status.why;
    return s;
  }
  try {
    read_measures(s);
  } catch (const std::exception& e) {  // one unreadable run leaves the others comparable
    s.measures.clear();
    s.verdict = "none", s.verdict_line = std::string("the run cannot be read: ") + e.what();
  }
  return s;
}

}  // namespace

double quantile_type7(std::span<const double> sorted, double p) {
  if (sorted.empty()) return std::nan("");
  const double h = static_cast<double>(sorted.size() - 1) * p;
  const auto lo = static_cast<std::size_t>(std::floor(h));
  const std::size_t hi = std::min(lo + 1, sorted.size() - 1);
  return sorted[lo] + (h - static_cast<double>(lo)) * (sorted[hi] - sorted[lo]);
}

bool SweepComparison::all_finished() const {
  return std::all_of(settings.begin(), settings.end(), [](const SettingSummary& s) { return s.status == "finished"; });
}
bool SweepComparison::all_passed() const {
  return std::all_of(settings.begin(), settings.end(), [](const SettingSummary& s) { return s.verdict == "pass"; });
}

SweepComparison compare_sweep(const std::string& dir) {
  SweepComparison c;
  c.folder = read_sweep_folder(dir);
  for (const SweepSetting& setting : c.folder.settings) {
    c.settings.push_back(summarise(setting));
    for (const MeasureBand& m : c.settings.back().measures)
      if (std::find(c.measures.begin(), c.measures.end(), m.name) == c.measures.end()) c.measures.push_back(m.name);
  }
  return c;
}

std::string comparison_csv(const SweepComparison& c) {
  using report::csv_number, report::csv_text;
  std::string csv = "index,folder";
  for (const std::string& k : c.folder.keys) csv += "," + csv_text(k);
  csv += ",status,verdict,measure,draws,median,low,high\n";
  for (const SettingSummary& s : c.settings) {
    std::string head = std::to_string(s.setting.index) + "," + csv_text(fs::path(s.setting.folder).filename().string());
    for (const std::string& v : s.setting.values) head += "," + csv_text(v);
    head += "," + csv_text(s.status) + "," + csv_text(s.verdict);
    for (const MeasureBand& m : s.measures)
      csv += head + "," + csv_text(m.name) + "," + std::to_string(m.draws) + "," + csv_number(m.median) + "," +
             csv_number(m.low) + "," + csv_number(m.high) + "\n";
  }
  return csv;
}

nlohmann::ordered_json comparison_json(const SweepComparison& c) {
  nlohmann::ordered_json j;
  j["sweep"] = c.folder.dir;
  j["band"] = {kBandLow, kBandHigh};
  j["quantile"] = "type 7 (numpy's default)";
  j["axes"] = nlohmann::ordered_json::array();
  for (std::size_t a = 0; a < c.folder.keys.size(); ++a)
    j["axes"].push_back({{"key", c.folder.keys[a]}, {"values", c.folder.axis_values[a]}});
  j["settings"] = nlohmann::ordered_json::array();
  for (const SettingSummary& s : c.settings) {
    nlohmann::ordered_json values = nlohmann::ordered_json::object();
    for (std::size_t a = 0; a < c.folder.keys.size(); ++a) values[c.folder.keys[a]] = s.setting.values[a];
    nlohmann::ordered_json measures = nlohmann::ordered_json::array();
    for (const MeasureBand& m : s.measures)
      measures.push_back({{"name", m.name},
                          {"draws", m.draws},
                          {"median", json_number<nlohmann::ordered_json>(m.median)},
                          {"low", json_number<nlohmann::ordered_json>(m.low)},
                          {"high", json_number<nlohmann::ordered_json>(m.high)}});
    j["settings"].push_back({{"index", s.setting.index},
                             {"folder", fs::path(s.setting.folder).filename().string()},
                             {"values", values},
                             {"status", s.status},
                             {"verdict", s.verdict},
                             {"verdict_line", s.verdict_line},
                             {"measures", measures}});
  }
  return j;
}

}  // namespace planmill::sweep
