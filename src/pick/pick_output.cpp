// The outputs of `planmill pick`: the table of picks, the summary and the folder (docs/pick.md).
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <sstream>
#include <string>
#include <unistd.h>

#include "planmill/base/error.hpp"
#include "planmill/compare/report.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/pick/pick.hpp"

namespace planmill::pick {
namespace {

namespace fs = std::filesystem;

std::string csv_num(double v) {
  if (std::isnan(v)) return "";
  char buffer[40];
  std::snprintf(buffer, sizeof buffer, "%.17g", v);
  return buffer;
}

std::string short_num(double v) { return compare::number_text(v, 6); }
std::string percent(double share) { return compare::percent_text(share); }

std::string plan_name(std::size_t i) { return "plan-" + std::to_string(i + 1) + ".csv"; }

}  // namespace

std::string picks_table_csv(const PickResult& r) {
  std::ostringstream out;
  out << "# " << compare::caution() << "\n";
  out << "# Aims, in order:";
  for (const std::string& a : r.aims) out << " " << a;
  out << "\n# Filters (--keep): " << r.filter_line << "\n";
  out << "pick,chain,record,step,plan_file,measure,value,below,equal,above,tail,at_or_beyond,mcse_at_or_beyond,ess,"
         "bound,p2.5,p50,p97.5\n";
  for (std::size_t i = 0; i < r.picks.size(); ++i) {
    const Pick& p = r.picks[i];
    for (std::size_t m = 0; m < p.places.size(); ++m) {
      const compare::ScalarComparison& s = p.places[m];
      out << i + 1 << ',' << p.chain << ',' << p.record << ',' << p.step << ',' << plan_name(i) << ','
          << r.observables[m] << ',' << csv_num(p.values[m]) << ',' << csv_num(s.below) << ',' << csv_num(s.equal)
          << ',' << csv_num(s.above) << ',' << (s.tail == compare::Tail::upper ? "upper" : "lower") << ','
          << csv_num(s.beyond) << ',' << csv_num(s.mcse_beyond) << ',' << csv_num(s.ess) << ','
          << csv_num(s.bound) << ',' << csv_num(s.percentiles[1]) << ',' << csv_num(s.percentiles[3]) << ','
          << csv_num(s.percentiles[5]) << "\n";
    }
  }
  return out.str();
}

std::string picks_summary(const PickResult& r) {
  std::ostringstream out;
  out << "picks from run " << r.run_dir << "\n";
  out << "aims, in lexicographic order:";
  for (const std::string& a : r.aims) out << " " << a;
  out << "\nfilters (--keep): " << r.filter_line << "\n";
  out << "ensemble: chains";
  for (const std::string& c : r.chains) out << " " << c;
  out << "; " << r.candidates << " kept records ranked; places against " << r.records_per_chain
      << " kept records per chain\n";
  // The verdict's headline; `planmill diagnose` gives the rest.
  std::istringstream verdict(r.verdict_line);
  for (std::string line; std::getline(verdict, line);)
    if (line.rfind("verdict:", 0) == 0) out << line << " (details: planmill diagnose " << r.run_dir << ")\n";
  if (!r.verdict_pass)
    out << "WARNING: the ensemble has not passed the convergence verdict; the places below may not describe the "
           "distribution the rules define.\n";
  out << r.picks.size() << " distinct plans picked";
  if (r.duplicates_skipped > 0) out << " (" << r.duplicates_skipped << " records skipped: same plan as a pick above)";
  out << ":\n";
  for (std::size_t i = 0; i < r.picks.size(); ++i) {
    const Pick& p = r.picks[i];
    out << "  " << plan_name(i) << ": chain " << p.chain << ", record " << p.record << ", step " << p.step << ";";
    for (const std::string& a : r.aims) {
      const std::string name = a.substr(a.find(':') + 1);
      for (std::size_t m = 0; m < r.observables.size(); ++m) {
        if (r.observables[m] != name) continue;
        const compare::ScalarComparison& s = p.places[m];
        out << " " << name << " = " << short_num(p.values[m]) << " (" << percent(s.below) << " of kept plans below, "
            << percent(s.equal) << " equal, " << percent(s.above) << " above);";
      }
    }
    out << "\n";
  }
  out << "These plans were chosen for their aims after the fact: their places say how rare such plans are among "
         "the kept records, not that any plan is an outlier by chance.\n";
  out << compare::caution() << "\n";
  return out.str();
}

void check_out_dir(const PickOptions& o) {
  const fs::path out(o.out_dir);
  std::error_code ec;
  if (fs::exists(out, ec) && !(fs::is_directory(out, ec) && fs::is_empty(out, ec)) && !o.force)
    throw InputError({o.out_dir, 0, "--out"}, "exists and is not empty",
                     "choose a new folder, or give --force to replace it");
}

void write_picks(const PickResult& r, const PickOptions& o) {
  check_out_dir(o);
  const fs::path out(o.out_dir);
  std::error_code ec;
  // Everything goes to a sibling staging folder, which then takes the place of out_dir.
  const fs::path parent = out.has_parent_path() ? out.parent_path() : fs::path(".");
  const fs::path staging = parent / ("." + out.filename().string() + ".partial-" + std::to_string(::getpid()));
  fs::remove_all(staging, ec);
  fs::create_directories(staging, ec);
  if (!fs::is_directory(staging))
    throw OutputError(staging.string() + ": cannot create a folder (" + ec.message() + ")");
  for (std::size_t i = 0; i < r.picks.size(); ++i)
    write_file_atomically((staging / plan_name(i)).string(), r.picks[i].plan_csv);
  write_file_atomically((staging / "picks.csv").string(), picks_table_csv(r));
  write_file_atomically((staging / "summary.txt").string(), picks_summary(r));
  if (fs::exists(out, ec)) {
    const fs::path old = parent / ("." + out.filename().string() + ".old-" + std::to_string(::getpid()));
    fs::rename(out, old, ec);
    if (ec) throw OutputError(o.out_dir + ": cannot move the old folder aside (" + ec.message() + ")");
    fs::remove_all(old, ec);
  }
  fs::rename(staging, out, ec);
  if (ec) throw OutputError(o.out_dir + ": cannot move the picks into place (" + ec.message() + ")");
}

}  // namespace planmill::pick
