#include "compare/outlier_report.hpp"

#include <cmath>
#include <cstdio>
#include <ostream>

#include "planmill/io/json_number.hpp"

namespace planmill::compare {
namespace {

using Json = nlohmann::ordered_json;

std::string num(double v, int digits) {
  if (std::isnan(v)) return "NA";
  char buffer[40];
  std::snprintf(buffer, sizeof buffer, "%.*g", digits, v);
  return buffer;
}

std::string cell(double v) { return std::isnan(v) ? std::string() : num(v, 17); }

// What a bound says, in words.
std::string reading(const MeasureOutlier& m) {
  if (std::isnan(m.p)) return "no result";
  if (m.p >= 1.0) return "no evidence against the null";
  return "under the null, a result this extreme has probability at most " + num(m.p, 3);
}

}  // namespace

void print_outlier_section(const OutlierSection& s, std::ostream& out) {
  out << "\n" << s.status << "\n";
  for (const auto& w : s.warnings) out << "  warning: " << w << "\n";
  if (!s.ran) return;
  char line[512];
  std::snprintf(line, sizeof line, "  %-36s %-9s %12s %6s %8s %9s %9s %9s %9s %9s\n", "measure", "tail", "plan",
                "chain", "states", "eps_low", "bound", "eps_high", "bound", "p bound");
  out << line;
  for (const MeasureOutlier& m : s.measures) {
    if (!m.note.empty()) {
      out << "  " << m.name << ": " << m.note << "\n";
      continue;
    }
    for (const ChainOutlier& c : m.chains) {
      std::snprintf(line, sizeof line, "  %-36s %-9s %12s %6s %8zu %9s %9s %9s %9s %9s\n", m.name.c_str(),
                    tail_name(m.tail), num(m.plan, 6).c_str(), c.chain.c_str(), c.shares.states,
                    num(c.shares.low, 4).c_str(), num(c.bound_low, 3).c_str(), num(c.shares.high, 4).c_str(),
                    num(c.bound_high, 3).c_str(), num(c.p, 3).c_str());
      out << line;
    }
    out << "  " << m.name << " (" << tail_name(m.tail) << "): p <= " << num(m.p, 3) << " over " << m.chains.size()
        << " chain(s) (Bonferroni); " << reading(m) << "\n";
  }
  out << "  assumptions:\n";
  for (const auto& a : s.assumptions) out << "    - " << a << "\n";
}

Json outlier_json(const OutlierSection& s) {
  Json measures = Json::array();
  for (const MeasureOutlier& m : s.measures) {
    Json chains = Json::array();
    for (const ChainOutlier& c : m.chains)
      chains.push_back({{"chain", c.chain},
                        {"states", c.shares.states},
                        {"eps_low", json_number<Json>(c.shares.low)},
                        {"eps_high", json_number<Json>(c.shares.high)},
                        {"bound_low", json_number<Json>(c.bound_low)},
                        {"bound_high", json_number<Json>(c.bound_high)},
                        {"p_bound", json_number<Json>(c.p)}});
    measures.push_back({{"name", m.name},
                        {"tail", tail_name(m.tail)},
                        {"plan", json_number<Json>(m.plan)},
                        {"chains", chains},
                        {"p_bound", json_number<Json>(m.p)},
                        {"combined", "bonferroni"},
                        {"note", m.note}});
  }
  return Json{{"ran", s.ran},
              {"status", s.status},
              {"warnings", s.warnings},
              {"assumptions", s.assumptions},
              {"measures", measures}};
}

const std::string& outlier_csv_columns() {
  static const std::string text = ",tail,chain,states,eps_low,eps_high,bound_low,bound_high,p_bound";
  return text;
}

const std::string& outlier_csv_blank() {
  static const std::string text = ",,,,,,,,";
  return text;
}

std::string outlier_csv_status(const OutlierSection& s) {
  std::string text = "# " + s.status + "\n";
  for (const auto& w : s.warnings) text += "# warning: " + w + "\n";
  return text;
}

std::string outlier_csv_rows(const OutlierSection& s, std::size_t empty_after_plan) {
  const std::string gap(empty_after_plan, ',');
  std::string text;
  for (const MeasureOutlier& m : s.measures) {
    if (!m.note.empty()) continue;
    const std::string head = m.name + ",," + cell(m.plan) + gap + "," + tail_name(m.tail) + ",";
    for (const ChainOutlier& c : m.chains)
      text += "outlier," + head + c.chain + "," + std::to_string(c.shares.states) + "," + cell(c.shares.low) + "," +
              cell(c.shares.high) + "," + cell(c.bound_low) + "," + cell(c.bound_high) + "," + cell(c.p) + "\n";
    text += "outlier_combined," + head + ",,,,,," + cell(m.p) + "\n";
  }
  return text;
}

}  // namespace planmill::compare
