// planmill ingest: a GIS polygon layer becomes a unit table, adjacency table and job skeleton.
#include <iostream>
#include <memory>

#include "cli/commands.hpp"
#include "planmill/ingest/ingest.hpp"

namespace planmill::cli {

void add_ingest_command(CLI::App& app, Action& action) {
  auto o = std::make_shared<IngestOptions>();
  auto* sub = app.add_subcommand("ingest", "build a unit table and adjacency from a map file (docs/ingest.md)");
  sub->add_option("MAP", o->map_path, "polygon layer GDAL reads (GeoPackage, Shapefile, GeoJSON, ...)")->required();
  sub->add_option("--id", o->id_field, "attribute holding the unit id")->required();
  sub->add_option("--out", o->out_dir, "output folder for units.csv, adjacency.csv, job.toml")->required();
  sub->add_option("--layer", o->layer, "layer name (default: the first layer)");
  sub->add_option("--keep", o->keep, "attributes copied to units.csv (comma-separated)")->delimiter(',');
  sub->add_option("--population", o->population, "population attribute (kept; named in job.toml)");
  sub->add_option("--county", o->county, "county attribute (kept; named in job.toml)");
  sub->add_option("--municipality", o->municipality, "municipality attribute (kept; named in job.toml)");
  sub->add_flag("--queen", o->queen, "units touching only at a point are neighbours too");
  sub->add_option("--snap", o->snap, "tolerance in map units: boundaries this close count as shared")
      ->check(CLI::NonNegativeNumber);
  sub->add_flag("--planar", o->planar, "measure coordinates as planar whatever the CRS says");
  sub->add_option("--bridges", o->bridges, "CSV of extra edges (id,id) joining separate parts");
  sub->add_flag("--join-islands", o->join_islands, "join each separate part to its nearest unit");
  sub->add_flag("--source-order", o->source_order,
                "keep the layer's feature order (default: units along a Hilbert curve of their centroids)");
  sub->callback([o, &action] {
    action = [o] {
      const IngestSummary s = ingest_map(*o);
      std::cout << "ingest: " << s.units << " units, " << s.edges << " adjacencies (" << (o->queen ? "queen" : "rook") << ")\n";
      std::cout << "ingest: measured " << s.measure << "\n";
      for (const std::string& n : s.notes) std::cout << "ingest: note: " << n << "\n";
      for (const std::string& f : s.written) std::cout << "ingest: wrote " << o->out_dir << "/" << f << "\n";
      return 0;
    };
  });
}

}  // namespace planmill::cli
