// export_run: check every choice, read what is needed, then write each file atomically.
#include <algorithm>
#include <charconv>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <map>
#include <memory>
#include <set>

#include <unistd.h>

#include "export/gis_export.hpp"
#include "planmill/io/number_text.hpp"
#include "planmill/base/error.hpp"
#include "planmill/export/export.hpp"
#include "planmill/export/district_tallies.hpp"
#include "planmill/export/plan_matrix.hpp"
#include "planmill/graph/load.hpp"
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

// The run's map as export needs it: unit ids always, the whole map (for tallies) when asked. Paths
// come from --map-units / --map-adjacency / --map-id-column or the job the run copied.
struct RunMap {
  std::vector<std::string> ids;
  GraphHandle graph;  // null unless the whole map was loaded
  std::string units_path;
  std::string id_column;
  std::string geometry_path;  // the job's map.geometry (when the job was read)
};

JobSpec run_job(const RunReader& run) {
  const fs::path job_copy = run.layout().job_copy();
  if (!fs::is_regular_file(job_copy)) {
    throw InputError({job_copy.string(), 0, ""},
                     "the run folder has no copy of its job, so its map is unknown",
                     "give the unit table with --map-units FILE and --map-id-column NAME");
  }
  // Relative paths in the job are relative to the job file as it was given to `planmill run`.
  const std::string& given = run.state().job_path;
  return parse_job_text(read_text(job_copy), given.empty() ? job_copy.string() : given);
}

void check_job_names_file(const RunReader& run, const std::string& path, const char* key,
                          const char* what, const char* option) {
  if (fs::is_regular_file(path)) return;
  throw InputError({run.layout().job_copy().string(), 0, key},
                   "names " + std::string(what) + " '" + path +
                       "' (relative to the job file as given, '" +
                       run.state().job_path + "'), which is not there",
                   "run export from the folder the run was started in, or give the file with " +
                       std::string(option) + " FILE");
}

RunMap run_map(const RunReader& run, const ExportOptions& o, bool whole, ExportResult& result) {
  RunMap map{{}, nullptr, o.units_path, o.id_column, {}};
  std::string& id_column = map.id_column;
  MapSpec spec;
  if (map.units_path.empty() || id_column.empty() || whole) {
    const JobSpec job = run_job(run);
    spec = job.map;
    map.geometry_path = job.map.geometry_path;
    if (map.units_path.empty()) {
      map.units_path = job.map.units_path;
      check_job_names_file(run, map.units_path, "map.units", "unit table", "--map-units");
    }
    if (id_column.empty()) id_column = job.map.id_column;
  }
  map.ids = read_unit_ids(map.units_path, id_column);
  if (run.unit_count() != 0 && map.ids.size() != run.unit_count()) {
    throw InputError({map.units_path, 0, ""},
                     "has " + std::to_string(map.ids.size()) + " units but the run's plans have " +
                         std::to_string(run.unit_count()),
                     "give the unit table the run used with --map-units FILE");
  }
  for (const InputFileEntry& input : run.state().inputs) {
    if (input.role != "units" || input.sha256.empty()) continue;
    if (sha256_file_hex(map.units_path) != input.sha256) {
      result.warnings.push_back(
          "unit table " + map.units_path + " differs from the one the run started with (SHA-256 " +
          input.sha256.substr(0, 12) + "...); check that its rows are in the same order");
    }
  }
  if (whole) {
    spec.units_path = map.units_path;
    spec.id_column = id_column;
    if (!o.adjacency_path.empty()) {
      spec.adjacency_path = o.adjacency_path;
      if (!fs::is_regular_file(spec.adjacency_path)) {
        throw InputError({spec.adjacency_path, 0, "--map-adjacency"},
                         "the adjacency file is not there",
                         "give the adjacency file the run used with --map-adjacency FILE");
      }
    } else {
      check_job_names_file(run, spec.adjacency_path, "map.adjacency", "adjacency file",
                           "--map-adjacency");
    }
    for (const InputFileEntry& input : run.state().inputs) {
      if (input.role != "adjacency" || input.sha256.empty()) continue;
      if (sha256_file_hex(spec.adjacency_path) != input.sha256) {
        result.warnings.push_back("adjacency file " + spec.adjacency_path +
                                  " differs from the one the run started with (SHA-256 " +
                                  input.sha256.substr(0, 12) +
                                  "...); the tallies' perimeters come from this one");
      }
    }
    map.graph = share_graph(load_unit_graph(spec));
  }
  return map;
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
  return number_text(value);
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
std::string tallies_file_name(std::uint64_t rung) {
  return "district-tallies" + rung_part(rung) + ".csv";
}
std::string matrix_file_name(std::uint64_t rung) { return "plan-matrix" + rung_part(rung) + ".h5"; }
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
  const bool gis = !o.gis_path.empty();
  if (!gis && (!o.plan_files.empty() || !o.geometry_path.empty())) {
    throw InputError({"", 0, o.plan_files.empty() ? "--geometry" : "--plan-file"},
                     "plan files and unit shapes are for the GIS layer, and none is asked for",
                     "name the layer to write with --gis FILE.gpkg or FILE.geojson");
  }
  if (gis && chosen.empty() && o.plan_files.empty()) {
    throw InputError({"", 0, "--gis"}, "a GIS layer of districts needs plans, and none are chosen",
                     "choose plans with --plans, --every or --chains, or give plan files with --plan-file");
  }
  if (chosen.empty() && (o.tallies || o.layout.matrix)) {
    throw InputError({"", 0, o.tallies ? "--tallies" : "--plan-layout"},
                     std::string(o.tallies ? "district tallies" : "a plan matrix") +
                         " need chosen plans, and none are chosen",
                     "choose plans with --plans, --every or --chains");
  }
  RunMap map;
  const bool whole = o.tallies || gis;
  if (!chosen.empty() || gis) map = run_map(run, o, whole, result);
  const std::vector<std::string>& ids = map.ids;
  std::string tallies;
  if (whole) {
    if (map.graph->unit_count() != run.unit_count()) {
      throw InputError({map.units_path, 0, ""}, "the map has " +
                           std::to_string(map.graph->unit_count()) +
                           " units but the run's plans have " + std::to_string(run.unit_count()),
                       "give the map the run used with --map-units and --map-adjacency");
    }
    if (o.tallies) tallies = tallies_header(*map.graph, map.units_path);
  }
  std::unique_ptr<GisExport> gis_layer;
  if (gis) {
    const GisSource source{o.geometry_path.empty() ? map.geometry_path : o.geometry_path, map.units_path,
                           map.id_column, run.layout().job_copy().string()};
    gis_layer = std::make_unique<GisExport>(o, map.graph, ids, source, run.district_count(), result.warnings);
  }

  // Only damage to the rung exported leaves a chain out.
  std::set<std::uint64_t> bad;
  for (const ChainProblem& p : rung == 0 ? run.verify() : run.verify_rungs()) {
    if (p.rung != rung) continue;
    if (bad.insert(p.chain_index).second) result.left_out.push_back(p);
  }
  const std::vector<std::string>& names = run.observable_names();
  std::vector<ChainRows> rows;
  std::map<std::uint64_t, const std::vector<std::uint64_t>*> steps_of;
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
  for (const ChainRows& r : rows) steps_of[r.chain] = &r.steps;

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
  std::unique_ptr<PlanMatrixWriter> matrix;
  if (gis_layer) gis_layer->start();
  if (o.layout.matrix) {
    matrix = std::make_unique<PlanMatrixWriter>(
        (staging.dir / matrix_file_name(rung)).string(),
        PlanMatrixHeader{ids, run.district_count(), rung, run.state().run_id,
                         run.state().job_sha256, run.state().planmill_version, chosen.size()});
  }

  // Plan files are written as they are read, so memory holds one plan (the wide table needs all).
  // Each chain's chosen records are read in stretches, decoding every record of a stretch once; a
  // gap of more than kNewStretchGap records starts a new stretch (from its nearest self-contained
  // record) rather than decoding the gap.
  constexpr std::uint64_t kNewStretchGap = 256;
  if (o.layout.files && !chosen.empty()) fs::create_directories(staging.dir / "plans", ec);
  std::map<std::uint64_t, std::vector<std::uint64_t>> wanted;
  for (const RecordRef& ref : chosen) wanted[ref.chain].push_back(ref.record);
  std::map<RecordRef, std::vector<DistrictIndex>> wide_labels;
  for (auto& [chain, records] : wanted) {
    if (left_out(bad, chain)) continue;
    std::sort(records.begin(), records.end());
    records.erase(std::unique(records.begin(), records.end()), records.end());
    // A chain found damaged part-way is left out of the tallies and the matrix whole.
    std::string chain_tallies;
    const std::uint64_t matrix_rows = matrix ? matrix->rows() : 0;
    const std::vector<std::uint64_t>& steps = *steps_of.at(chain);
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
              if (o.layout.files) {
                write(plan_file_name(ref, rung),
                      plan_csv_text(Plan(id_graph, run.district_count(),
                                         std::vector<DistrictIndex>(labels.begin(), labels.end()))));
              }
              if (o.layout.wide) {
                wide_labels.emplace(ref, std::vector<DistrictIndex>(labels.begin(), labels.end()));
              }
              if (whole) {
                const Plan plan(map.graph, run.district_count(),
                                std::vector<DistrictIndex>(labels.begin(), labels.end()));
                if (o.tallies) append_tally_rows(chain_tallies, chain, record, steps.at(record), plan);
                if (gis_layer) gis_layer->add_record(ref, steps.at(record), plan);
              }
              if (matrix) matrix->add(chain, record, steps.at(record), labels);
            },
            rung);
        begin = end;
      }
      tallies += chain_tallies;
      if (gis_layer) gis_layer->keep_chain();
    } catch (const StoreError& e) {
      if (matrix) matrix->drop_rows_from(matrix_rows);
      if (gis_layer) gis_layer->drop_chain();
      leave_out(result, bad, chain, run.record_count(chain), e.what());
    }
  }
  if (matrix) {
    matrix->close();
    result.written.push_back(matrix_file_name(rung));
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
  if (o.tallies) write(tallies_file_name(rung), tallies);
  if (gis_layer) gis_layer->finish();
  for (const RecordRef& ref : chosen) result.plans += left_out(bad, ref.chain) ? 0 : 1;
  for (const std::string& name : result.written) {  // renames within one file system: no new space
    fs::create_directories((out / name).parent_path());
    fs::rename(staging.dir / name, out / name);
  }
  if (gis_layer) {
    result.written.push_back(gis_layer->move_into_place());
    result.gis_plans = gis_layer->plans();
  }
  return result;
}
}  // namespace planmill
