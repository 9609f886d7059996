// export_run: check every choice, read what is needed, then write each file atomically.
#include <algorithm>
#include <charconv>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <map>
#include <set>

#include <unistd.h>

#include "planmill/base/error.hpp"
#include "planmill/export/export.hpp"
#include "planmill/graph/unit_graph.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/io/csv.hpp"
#include "planmill/io/file_hash.hpp"
#include "planmill/seed/plan_csv.hpp"
#include "planmill/job/job.hpp"
#include "planmill/plan/plan.hpp"
#include "planmill/store/hdf5_handle.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

std::string read_text(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  return {std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
}

// The unit ids of the run's map, from --map-units / --map-id-column or the job the run copied.
std::vector<std::string> run_unit_ids(const RunReader& run, const ExportOptions& o,
                                      ExportResult& result) {
  std::string units_path = o.units_path, id_column = o.id_column;
  if (units_path.empty() || id_column.empty()) {
    const fs::path job_copy = run.layout().job_copy();
    if (!fs::is_regular_file(job_copy)) {
      throw InputError({job_copy.string(), 0, ""},
                       "the run folder has no copy of its job, so its map is unknown",
                       "give the unit table with --map-units FILE and --map-id-column NAME");
    }
    // Relative paths in the job are relative to the job file as it was given to `planmill run`.
    const std::string& given = run.state().job_path;
    const JobSpec job =
        parse_job_text(read_text(job_copy), given.empty() ? job_copy.string() : given);
    if (units_path.empty()) {
      units_path = job.map.units_path;
      if (!fs::is_regular_file(units_path)) {
        throw InputError({job_copy.string(), 0, "map.units"},
                         "names unit table '" + units_path +
                             "' (relative to the job file as given, '" + given +
                             "'), which is not there",
                         "run export from the folder the run was started in, or give the table "
                         "with --map-units FILE");
      }
    }
    if (id_column.empty()) id_column = job.map.id_column;
  }
  std::vector<std::string> ids = read_unit_ids(units_path, id_column);
  if (run.unit_count() != 0 && ids.size() != run.unit_count()) {
    throw InputError({units_path, 0, ""},
                     "has " + std::to_string(ids.size()) + " units but the run's plans have " +
                         std::to_string(run.unit_count()),
                     "give the unit table the run used with --map-units FILE");
  }
  for (const InputFileEntry& input : run.state().inputs) {
    if (input.role != "units" || input.sha256.empty()) continue;
    if (sha256_file_hex(units_path) != input.sha256) {
      result.warnings.push_back(
          "unit table " + units_path + " differs from the one the run started with (SHA-256 " +
          input.sha256.substr(0, 12) + "...); check that its rows are in the same order");
    }
  }
  return ids;
}

struct ChainRows {
  std::uint64_t chain;
  std::vector<std::uint64_t> steps;
  std::vector<double> values;  // records x observables
};

bool left_out(const std::set<std::uint64_t>& bad, std::uint64_t chain) {
  return bad.count(chain) > 0;
}

void leave_out(ExportResult& result, std::set<std::uint64_t>& bad, std::uint64_t chain,
               std::uint64_t records, const std::string& what) {
  if (!bad.insert(chain).second) return;
  result.left_out.push_back({chain, 0, records == 0 ? 0 : records - 1, what});
}

}  // namespace

std::string csv_number(double value) {
  if (std::isnan(value)) return "NA";
  if (std::isinf(value)) return value > 0 ? "Inf" : "-Inf";
  char buffer[32];
  const auto [end, ec] = std::to_chars(buffer, buffer + sizeof buffer, value);
  return {buffer, end};
}

namespace {
std::string rung_part(std::uint64_t rung) {
  return rung == 0 ? std::string() : "-rung-" + std::to_string(rung);
}
}  // namespace

std::string observables_file_name(std::uint64_t rung) {
  return "observables" + rung_part(rung) + ".csv";
}
std::string wide_file_name(std::uint64_t rung) { return "plans-wide" + rung_part(rung) + ".csv"; }
std::string plan_file_name(const RecordRef& ref, std::uint64_t rung) {
  return "plans/chain-" + std::to_string(ref.chain) + rung_part(rung) + "-record-" +
         std::to_string(ref.record) + ".csv";
}
std::string wide_column_name(const RecordRef& ref) {
  return "c" + std::to_string(ref.chain) + "_r" + std::to_string(ref.record);
}

void check_rung_recorded(const RunReader& run, std::uint64_t rung) {
  if (rung == 0) return;
  for (std::uint64_t chain : run.chains()) {
    const std::uint64_t rungs = run.recorded_rungs(chain);
    if (rung < rungs) continue;
    throw InputError(
        {run.layout().state_file().string(), 0, "--rung"},
        "chain " + std::to_string(chain) + " recorded " + std::to_string(rungs) +
            (rungs == 1 ? " rung (rung 0 only)" : " rungs (0.." + std::to_string(rungs - 1) + ")") +
            ", so it has no rung " + std::to_string(rung) + " to export",
        "export a rung it recorded, or run the job with [tempering] record = \"all\" "
        "to record every rung of each ladder");
  }
}

ExportResult export_run(const ExportOptions& o) {
  ExportResult result;
  const RunReader run(o.run_dir);
  const std::uint64_t rung = o.rung;
  // Everything that can be the user's mistake is checked before anything is written.
  check_rung_recorded(run, rung);
  const std::vector<RecordRef> chosen = choose_records(run, o.plans);
  std::vector<std::string> ids;
  if (!chosen.empty()) ids = run_unit_ids(run, o, result);

  // Only damage to the rung exported leaves a chain out.
  std::set<std::uint64_t> bad;
  for (const ChainProblem& p : rung == 0 ? run.verify() : run.verify_rungs()) {
    if (p.rung != rung) continue;
    if (bad.insert(p.chain_index).second) result.left_out.push_back(p);
  }
  const std::vector<std::string>& names = run.observable_names();
  std::vector<ChainRows> rows;
  for (std::uint64_t chain : run.chains()) {
    if (left_out(bad, chain)) continue;
    try {
      ChainRows r{chain, run.record_steps(chain, rung), run.read_observables(chain, rung)};
      if (r.values.size() != r.steps.size() * names.size()) {
        throw StoreError(run.layout().state_file().string(), "reading observables",
                         "the observable table does not have one row per record");
      }
      rows.push_back(std::move(r));
    } catch (const StoreError& e) {
      leave_out(result, bad, chain, run.record_count(chain), e.what());
    }
  }

  // Plans, labelled with the map's unit ids through the plan CSV writer.
  GraphHandle id_graph;
  if (!ids.empty()) {
    UnitGraphBuilder builder;
    for (const std::string& id : ids) (void)builder.add_unit(id, 0);
    id_graph = share_graph(std::move(builder).build());
  }
  const fs::path out(o.out_dir);
  std::error_code ec;
  fs::create_directories(out, ec);
  if (!fs::is_directory(out)) {
    throw InputError({o.out_dir, 0, "--out"}, "cannot create the output folder: " + ec.message(),
                     "give a folder that can be written");
  }
  // Every file goes to a staging folder inside `out` first and is moved into place only once all
  // are written, so a failure (a full disk) leaves `out` as it was and no part of an export.
  struct Staging {
    fs::path dir;
    ~Staging() {
      std::error_code ignored;
      fs::remove_all(dir, ignored);
    }
  } staging{out / (".export-partial-" + std::to_string(::getpid()))};
  fs::remove_all(staging.dir, ec);
  fs::create_directories(staging.dir, ec);
  if (!fs::is_directory(staging.dir)) {
    throw OutputError(staging.dir.string() + ": cannot create a folder (" + ec.message() +
                      "); check that " + o.out_dir + " is writable");
  }
  const auto write = [&](const std::string& name, std::string_view text) {
    write_file_atomically((staging.dir / name).string(), text);
    result.written.push_back(name);
  };

  // Plan files are written as they are read, so memory holds one plan (the wide table needs all).
  // Each chain's chosen records are read in stretches, decoding every record of a stretch once; a
  // gap of more than kNewStretchGap records starts a new stretch (from its nearest self-contained
  // record) rather than decoding the gap.
  constexpr std::uint64_t kNewStretchGap = 256;
  if (o.layout != PlanLayout::wide && !chosen.empty()) fs::create_directories(staging.dir / "plans", ec);
  std::map<std::uint64_t, std::vector<std::uint64_t>> wanted;
  for (const RecordRef& ref : chosen) wanted[ref.chain].push_back(ref.record);
  std::map<RecordRef, std::vector<DistrictIndex>> wide_labels;
  for (auto& [chain, records] : wanted) {
    if (left_out(bad, chain)) continue;
    std::sort(records.begin(), records.end());
    records.erase(std::unique(records.begin(), records.end()), records.end());
    try {
      for (std::size_t begin = 0; begin < records.size();) {
        std::size_t end = begin + 1;
        while (end < records.size() && records[end] - records[end - 1] <= kNewStretchGap) ++end;
        std::size_t next = begin;
        run.for_each_plan(
            chain, records[begin], records[end - 1],
            [&](std::uint64_t record, std::span<const DistrictIndex> labels) {
              if (next >= end || records[next] != record) return;
              ++next;
              const RecordRef ref{chain, record};
              if (o.layout != PlanLayout::wide) {
                write(plan_file_name(ref, rung),
                      plan_csv_text(Plan(id_graph, run.district_count(),
                                         std::vector<DistrictIndex>(labels.begin(), labels.end()))));
              }
              if (o.layout != PlanLayout::files) {
                wide_labels.emplace(ref, std::vector<DistrictIndex>(labels.begin(), labels.end()));
              }
            },
            rung);
        begin = end;
      }
    } catch (const StoreError& e) {
      leave_out(result, bad, chain, run.record_count(chain), e.what());
    }
  }
  // The wide table's columns in the order chosen, pointing into wide_labels.
  std::vector<std::pair<RecordRef, const std::vector<DistrictIndex>*>> wide_plans;
  for (const RecordRef& ref : chosen) {
    const auto it = wide_labels.find(ref);
    if (it != wide_labels.end()) wide_plans.emplace_back(ref, &it->second);
  }
  // A chain found damaged while reading plans is left out of the tables too.
  std::erase_if(wide_plans, [&](const auto& p) { return left_out(bad, p.first.chain); });
  std::erase_if(rows, [&](const ChainRows& r) { return left_out(bad, r.chain); });

  std::string table = "chain,record,step";
  for (const std::string& name : names) table += "," + csv_field(name);
  table += '\n';
  for (const ChainRows& r : rows) {
    for (std::size_t record = 0; record < r.steps.size(); ++record) {
      table += std::to_string(r.chain) + ',' + std::to_string(record) + ',' +
               std::to_string(r.steps[record]);
      for (std::size_t j = 0; j < names.size(); ++j) {
        table += ',';
        table += csv_number(r.values[record * names.size() + j]);
      }
      table += '\n';
      ++result.observable_rows;
    }
  }
  write(observables_file_name(rung), table);

  if (!wide_plans.empty()) {
    std::string wide = "unit";
    for (const auto& p : wide_plans) wide += "," + wide_column_name(p.first);
    wide += '\n';
    for (UnitIndex u = 0; u < ids.size(); ++u) {
      wide += csv_field(ids[u]);
      for (const auto& p : wide_plans) {
        wide += ',';
        wide += std::to_string(static_cast<unsigned>((*p.second)[u]) + 1);
      }
      wide += '\n';
    }
    write(wide_file_name(rung), wide);
  }
  for (const RecordRef& ref : chosen) result.plans += left_out(bad, ref.chain) ? 0 : 1;
  for (const std::string& name : result.written) {  // renames within one file system: no new space
    fs::create_directories((out / name).parent_path());
    fs::rename(staging.dir / name, out / name);
  }
  return result;
}
}  // namespace planmill
