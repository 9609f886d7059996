// The score as text for the terminal and as JSON (docs/score.md).
#include <cstdio>

#include "planmill/io/json_number.hpp"
#include "planmill/score/score.hpp"

namespace planmill::score {
namespace {

std::string number(double v) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.6g", v);
  return buf;
}

std::string share(double part, double whole) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.2f%%", whole > 0 ? 100.0 * part / whole : 0.0);
  return buf;
}

std::string describe_pieces(const NotContiguous& n) {
  const DistrictPiece& largest = n.pieces.front();
  std::size_t units = 0;
  std::int64_t people = 0;
  std::string list;
  for (std::size_t i = 1; i < n.pieces.size(); ++i) {
    units += n.pieces[i].units;
    people += n.pieces[i].population;
    list += (i > 1 ? "; " : "") + std::to_string(n.pieces[i].units) + " units, " +
            std::to_string(n.pieces[i].population) + " people";
  }
  return "district " + std::to_string(n.district + 1) + " is not contiguous: " + std::to_string(n.pieces.size()) +
         " pieces; apart from the largest (" + std::to_string(largest.units) + " units, " +
         std::to_string(largest.population) + " people), " + std::to_string(units) + " units and " +
         std::to_string(people) + " people lie in the other pieces (" + list + ")";
}

std::vector<std::string> broken_rules(const ScoreReport& r) {
  std::vector<std::string> out;
  for (std::size_t d : r.empty_districts) out.push_back("district " + std::to_string(d) + " has no units");
  for (const OutOfRange& o : r.out_of_range)
    out.push_back("district " + std::to_string(o.district) + " is beyond the job's " + std::to_string(r.districts) +
                  " districts: " + std::to_string(o.units) + " units, " + std::to_string(o.population) + " people");
  out.insert(out.end(), r.population_text.begin(), r.population_text.end());
  for (const NotContiguous& n : r.not_contiguous) out.push_back(describe_pieces(n));
  for (const RuleTracker::Breach& b : r.limits) out.push_back(b.text + " [" + b.key + "]");
  return out;
}

}  // namespace

std::string ReadPlan::describe(const UnitGraph& graph) const {
  if (!carried) return "read on the map's " + std::to_string(graph.unit_count()) + " units as given";
  return carried->method + "; " + std::to_string(carried->split.size()) + " units split, " +
         std::to_string(carried->split_population) + " people in them (" +
         share(static_cast<double>(carried->split_population), static_cast<double>(carried->total_population)) +
         " of the map's population)";
}

void print_score(const ScoreReport& r, std::ostream& out) {
  out << "plan " << r.plan_file << " scored against job " << r.job_file << " (" << r.units << " units, "
      << r.districts << " districts)\n";
  out << "plan: " << r.reading_text << "\n";
  for (const auto& w : r.reading.warnings) out << "warning: " << w << "\n";
  if (r.reading.carried)
    for (const SplitUnit& s : r.reading.carried->split) {
      out << "  split unit '" << s.id << "' given district " << s.district + 1 << ":";
      for (const auto& p : s.parts)
        out << " district " << p.district + 1 << ": " << p.fine_units << " fine units, " << p.population << " people;";
      out << "\n";
    }
  out << "rules: every district's population within " << number(100.0 * r.tolerance) << "% of the ideal "
      << number(r.ideal) << " (" << r.bounds.min << " to " << r.bounds.max << " people); every district contiguous";
  for (const std::string& limit : r.limit_rules) out << "; " << limit;
  out << "\n";
  const std::vector<std::string> broken = broken_rules(r);
  if (broken.empty()) out << "hard rules: the plan meets every one\n";
  else out << "hard rules: the plan breaks " << broken.size() << ":\n";
  for (const auto& b : broken) out << "  " << b << "\n";
  if (!r.values) {
    out << "values: " << r.values_missing << "\n";
    return;
  }
  out << "values (the observables the runner records and the job's [measures]):\n";
  for (const auto& name : r.values->scalar_order) out << "  " << name << " = " << number(r.values->scalars.at(name)) << "\n";
  for (std::size_t v = 0; v < r.values->vector_names.size(); ++v) {
    out << "  " << r.values->vector_names[v] << ":";
    for (double x : r.values->vectors[v]) out << " " << number(x);
    out << "\n";
  }
}

nlohmann::json score_json(const ScoreReport& r) {
  nlohmann::json j;
  j["job_file"] = r.job_file;
  j["plan_file"] = r.plan_file;
  j["units"] = r.units;
  j["districts"] = r.districts;
  nlohmann::json reading{{"text", r.reading_text}, {"warnings", r.reading.warnings}, {"carried", r.reading.carried.has_value()}};
  if (r.reading.carried) {
    const CarriedPlan& c = *r.reading.carried;
    reading["crosswalk_file"] = r.crosswalk_file;
    reading["fine_units"] = c.fine_units;
    reading["split_population"] = c.split_population;
    reading["split_population_share"] =
        json_number(static_cast<double>(c.split_population) / static_cast<double>(c.total_population));
    nlohmann::json split = nlohmann::json::array();
    for (const SplitUnit& s : c.split) {
      nlohmann::json parts = nlohmann::json::array();
      for (const auto& p : s.parts)
        parts.push_back({{"district", p.district + 1}, {"fine_units", p.fine_units}, {"population", p.population}});
      split.push_back({{"unit", s.id}, {"district", s.district + 1}, {"parts", parts}});
    }
    reading["split_units"] = split;
    nlohmann::json units = nlohmann::json::array();
    for (DistrictIndex d : c.district) units.push_back(d + 1);
    reading["unit_districts"] = units;  // in the map's unit order
  }
  j["reading"] = reading;
  j["rules"] = {{"population_tolerance", json_number(r.tolerance)},
                {"ideal_population", json_number(r.ideal)},
                {"population_min", r.bounds.min},
                {"population_max", r.bounds.max},
                {"county_splits_max", r.county_splits_max ? nlohmann::json(*r.county_splits_max) : nlohmann::json()},
                {"limits", r.limit_rules}};
  nlohmann::json broken;
  broken["meets_every_rule"] = r.meets_every_rule();
  broken["text"] = broken_rules(r);
  broken["empty_districts"] = r.empty_districts;
  broken["out_of_range"] = nlohmann::json::array();
  for (const OutOfRange& o : r.out_of_range)
    broken["out_of_range"].push_back({{"district", o.district}, {"units", o.units}, {"population", o.population}});
  broken["population"] = nlohmann::json::array();
  for (const PopulationBreach& b : r.population)
    broken["population"].push_back({{"district", b.district + 1},
                                    {"population", b.population},
                                    {"beyond", b.beyond},
                                    {"beyond_share_of_ideal", json_number(static_cast<double>(b.beyond) / r.ideal)}});
  broken["not_contiguous"] = nlohmann::json::array();
  for (const NotContiguous& n : r.not_contiguous) {
    nlohmann::json pieces = nlohmann::json::array();
    for (const DistrictPiece& p : n.pieces) pieces.push_back({{"units", p.units}, {"population", p.population}});
    broken["not_contiguous"].push_back({{"district", n.district + 1}, {"pieces", pieces}});
  }
  broken["counties_split"] = r.counties_split;
  broken["county_cap_broken"] = r.county_cap_broken;
  broken["limits"] = nlohmann::json::array();
  for (const RuleTracker::Breach& b : r.limits) broken["limits"].push_back({{"key", b.key}, {"text", b.text}});
  j["hard_rules"] = broken;
  if (r.values) {
    nlohmann::json scalars = nlohmann::json::array();
    for (const auto& name : r.values->scalar_order)
      scalars.push_back({{"name", name}, {"value", json_number(r.values->scalars.at(name))}});
    nlohmann::json vectors = nlohmann::json::array();
    for (std::size_t v = 0; v < r.values->vector_names.size(); ++v) {
      nlohmann::json values = nlohmann::json::array();
      for (double x : r.values->vectors[v]) values.push_back(json_number(x));
      vectors.push_back({{"name", r.values->vector_names[v]}, {"values", values}});
    }
    j["scalars"] = scalars;
    j["sorted_vectors"] = vectors;
  } else {
    j["values_missing"] = r.values_missing;
  }
  return j;
}

}  // namespace planmill::score
