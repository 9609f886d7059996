// planmill export RUNDIR --out DIR: observables and chosen plans as CSV, district tallies, a
// dense HDF5 plan matrix, and plans as a GIS layer of dissolved districts (docs/export.md).
// Exit status: 0 done, 2 bad input (nothing written), 3 some chains damaged and left out.
#include <iostream>
#include <string>

#include "cli/commands.hpp"
#include "cli/whole_option.hpp"
#include "planmill/export/export.hpp"

namespace planmill::cli {
namespace {

struct ExportArgs {
  ExportOptions options;
  std::string plans, chains, layout = "files", every, rung;
};

int run_export(ExportArgs& args) {
  ExportOptions& o = args.options;
  if (!args.every.empty())
    o.plans.every = parse_whole_option(args.every, "--every", 1, UINT64_MAX, "N (records 0, N, 2N, ... are written)");
  // A ladder has at most 64 rungs (tempering.rungs, docs/jobs.md), numbered from 0.
  if (!args.rung.empty()) o.rung = parse_whole_option(args.rung, "--rung", 0, 63, "a rung of the run's ladders");
  if (!args.plans.empty()) o.plans.records = parse_record_list(args.plans, "--plans");
  if (!args.chains.empty()) {
    o.plans.chains_given = true;
    o.plans.chains = parse_chain_list(args.chains, "--chains");
  }
  o.layout = parse_plan_layout(args.layout, "--plan-layout");
  const ExportResult result = export_run(o);
  for (const std::string& w : result.warnings) std::cerr << "planmill: warning: " << w << "\n";
  std::cout << "wrote " << result.observable_rows << " observable rows and " << result.plans
            << " plans";
  if (o.rung > 0) std::cout << " of rung " << o.rung;
  std::cout << " to " << o.out_dir << "\n";
  if (!o.gis_path.empty()) {
    std::cout << "wrote the districts of " << result.gis_plans << " plan(s) to " << o.gis_path << "\n";
  }
  for (const ChainProblem& p : result.left_out) {
    std::cerr << "planmill: chain " << p.chain_index << ", records " << p.first_record << "-";
    if (p.last_record == UINT64_MAX) {
      std::cerr << "end";
    } else {
      std::cerr << p.last_record;
    }
    std::cerr << ": " << p.what << "; chain " << p.chain_index << " left out of the export\n";
  }
  return result.left_out.empty() ? 0 : 3;
}

}  // namespace

void add_export_command(CLI::App& app, Action& action) {
  auto args = std::make_shared<ExportArgs>();
  auto* sub = app.add_subcommand(
      "export", "write a run's observables, chosen plans and district tallies as CSV or HDF5");
  sub->add_option("RUNDIR", args->options.run_dir, "run folder written by 'planmill run'")->required();
  sub->add_option("--out", args->options.out_dir, "folder to write into (created or reused)")
      ->required();
  sub->add_option("--plans", args->plans, "plans to write, as CHAIN:RECORD,... (records from 0)");
  sub->add_option("--every", args->every,
                  "write records 0, N, 2N, ... of every chain (or of the --chains); N >= 1");
  sub->add_option("--chains", args->chains,
                  "chains for --every, as 0,2,5-7; alone: every record of these chains");
  sub->add_option("--plan-layout", args->layout,
                  "files: one CSV per plan; wide: one CSV, a column per plan; matrix: one HDF5 "
                  "matrix, plans x units; several as files,matrix; both = files,wide; none");
  sub->add_flag("--tallies", args->options.tallies,
                "also write district-tallies.csv: population, counts, area and perimeter of every "
                "district of every chosen plan");
  sub->add_option("--rung", args->rung,
                  "rung of each ladder to export (0, the default: the ensemble; R > 0 needs "
                  "[tempering] record = \"all\")");
  sub->add_option("--map-units", args->options.units_path,
                  "unit table giving the unit ids (default: the one the run's job names)");
  sub->add_option("--map-adjacency", args->options.adjacency_path,
                  "adjacency file of the map, for --tallies (default: the one the job names)");
  sub->add_option("--map-id-column", args->options.id_column,
                  "id column of the unit table (default: the job's map.id)");
  sub->add_option("--gis", args->options.gis_path,
                  "also write the chosen plans (and --plan-file plans) as a GIS layer, one dissolved "
                  "polygon per district with its tallies: FILE.gpkg (GeoPackage) or FILE.geojson");
  sub->add_option("--gis-format", args->options.gis_format,
                  "format of the --gis file whatever its name: gpkg or geojson");
  sub->add_option("--geometry", args->options.geometry_path,
                  "the units' polygons for --gis, any vector file GDAL reads (default: the job's "
                  "map.geometry)");
  sub->add_option("--geometry-id", args->options.geometry_id,
                  "attribute of --geometry holding the unit ids (default: the map's id column)");
  sub->add_option("--plan-file", args->options.plan_files,
                  "a plan CSV on the run's units (unit,district) to add to the --gis layer; repeatable")
      ->expected(1)
      ->multi_option_policy(CLI::MultiOptionPolicy::TakeAll);
  sub->add_option("--crosswalk", args->options.crosswalk_path,
                  "read the --plan-file plans on finer units through this crosswalk (as score does)");
  sub->callback([&action, args] { action = [args] { return run_export(*args); }; });
}

}  // namespace planmill::cli
