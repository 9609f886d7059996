// The GIS layer of export: the units' shapes checked and read first, each plan dissolved into
// its districts, one feature per district with the tallies of district-tallies.csv.
#include "export/gis_export.hpp"

#include <unistd.h>

#include <cmath>
#include <filesystem>
#include <set>

#include "planmill/base/error.hpp"
#include "planmill/export/district_tallies.hpp"
#include "planmill/score/score.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

geo::UnitShapes read_shapes(const ExportOptions& o, std::span<const std::string> ids, const GisSource& source) {
  const std::string& geometry = source.geometry;
  const std::string key = o.geometry_path.empty() ? "map.geometry" : "--geometry";
  if (geometry.empty()) {
    throw InputError({source.job_file, 0, "map.geometry"}, "the run's job names no shapes of its units (map.geometry)",
                     "give the units' polygons with --geometry FILE (any vector file GDAL reads)");
  }
  if (!fs::is_regular_file(geometry)) {
    throw InputError({geometry, 0, key}, "the units' shapes are not there",
                     o.geometry_path.empty() ? "run export from the folder the run was started in, or give them with --geometry FILE"
                                             : "give the file of the units' polygons with --geometry FILE");
  }
  return geo::UnitShapes(geometry, o.geometry_id.empty() ? source.id_column : o.geometry_id, ids, key);
}

bool whole_column(std::span<const double> values) {
  for (double v : values) {
    if (v != std::trunc(v)) return false;
  }
  return true;
}

geo::FieldValue real_or_null(double v) { return std::isnan(v) ? geo::FieldValue{} : geo::FieldValue{v}; }

}  // namespace

GisExport::GisExport(const ExportOptions& o, const GraphHandle& graph, std::span<const std::string> ids,
                     const GisSource& source, std::size_t k, std::vector<std::string>& warnings)
    : path_(o.gis_path),
      format_(geo::layer_format(o.gis_path, o.gis_format, "--gis")),
      shapes_(read_shapes(o, ids, source)) {
  if (!shapes_.crs_note().empty()) warnings.push_back(shapes_.crs_note());
  if (shapes_.extra_features() > 0) {
    warnings.push_back(std::to_string(shapes_.extra_features()) +
                       " feature(s) of the units' shapes are no unit of the map; left out of the districts");
  }
  using Type = geo::Field::Type;
  fields_ = {{"plan", Type::text},     {"chain", Type::integer},      {"record", Type::integer},
             {"step", Type::integer},  {"district", Type::integer},   {"population", Type::integer},
             {"deviation", Type::real}};
  std::set<std::string> taken;
  for (const geo::Field& f : fields_) taken.insert(f.name);
  taken.insert({"area", "perimeter"});
  for (std::size_t c = 0; c < graph->count_column_count(); ++c) {
    const std::string& name = graph->count_column_name(c);
    if (!taken.insert(name).second) {
      throw InputError({source.units_path, 1, name}, "count column '" + name + "' has the name of another attribute of the district layer",
                       "rename the column in the unit table and the job to export districts");
    }
    fields_.push_back({name, whole_column(graph->count_column(c)) ? Type::integer : Type::real});
  }
  fields_.push_back({"area", Type::real});
  fields_.push_back({"perimeter", Type::real});
  for (const std::string& file : o.plan_files) {
    score::ReadPlan how;
    Plan plan = score::read_plan(file, o.crosswalk_path, graph, k, &how);
    for (const std::string& w : how.warnings) warnings.push_back(file + ": " + w);
    plan_files_.emplace_back(file, std::move(plan));
  }
  const fs::path p(path_);
  temp_path_ = (p.parent_path() / ("." + p.stem().string() + ".partial-" + std::to_string(::getpid()) +
                                   p.extension().string())).string();
}

GisExport::~GisExport() {
  writer_.reset();  // an unclosed writer removes its file
  std::error_code ignored;
  fs::remove(temp_path_, ignored);
}

void GisExport::start() {
  const fs::path parent = fs::path(temp_path_).parent_path();
  std::error_code ec;
  if (!parent.empty()) fs::create_directories(parent, ec);
  writer_ = std::make_unique<geo::DistrictLayerWriter>(temp_path_, format_, shapes_, fields_);
}

std::vector<std::vector<geo::FieldValue>> GisExport::rows_of(const Plan& plan, geo::FieldValue name, geo::FieldValue chain,
                                                             geo::FieldValue record, geo::FieldValue step) const {
  const UnitGraph& g = plan.graph();
  const double ideal = plan.ideal_population();
  std::vector<std::vector<geo::FieldValue>> rows;
  for (std::size_t d = 0; d < plan.district_count(); ++d) {
    const auto district = static_cast<DistrictIndex>(d);
    const std::int64_t population = plan.population(district);
    std::vector<geo::FieldValue>& row = rows.emplace_back();
    row = {name, chain, record, step, static_cast<std::int64_t>(d + 1), population,
           ideal > 0 ? geo::FieldValue{(static_cast<double>(population) - ideal) / ideal} : geo::FieldValue{}};
    for (std::size_t c = 0; c < g.count_column_count(); ++c) {
      const double v = plan.count(district, c);
      if (fields_[row.size()].type == geo::Field::Type::integer) {
        row.emplace_back(static_cast<std::int64_t>(v));
      } else {
        row.emplace_back(v);
      }
    }
    row.push_back(real_or_null(tally_area(plan, district)));
    row.push_back(real_or_null(tally_perimeter(plan, district)));
  }
  return rows;
}

void GisExport::add_record(const RecordRef& ref, std::uint64_t step, const Plan& plan) {
  auto rows = rows_of(plan, wide_column_name(ref), static_cast<std::int64_t>(ref.chain),
                      static_cast<std::int64_t>(ref.record), static_cast<std::int64_t>(step));
  pending_.emplace_back(geo::DistrictShapes(shapes_, plan.assignment(), plan.district_count()), std::move(rows));
  ++pending_plans_;
}

void GisExport::keep_chain() {
  for (const auto& [shapes, rows] : pending_) write(shapes, rows);
  plans_ += pending_plans_;
  drop_chain();
}

void GisExport::drop_chain() {
  pending_.clear();
  pending_plans_ = 0;
}

void GisExport::write(const geo::DistrictShapes& shapes, const std::vector<std::vector<geo::FieldValue>>& rows) {
  for (std::size_t d = 0; d < rows.size(); ++d) writer_->add(shapes, static_cast<DistrictIndex>(d), rows[d]);
}

void GisExport::finish() {
  for (const auto& [file, plan] : plan_files_) {
    write(geo::DistrictShapes(shapes_, plan.assignment(), plan.district_count()), rows_of(plan, file, {}, {}, {}));
    ++plans_;
  }
  writer_->close();
}

std::string GisExport::move_into_place() {
  fs::rename(temp_path_, path_);
  writer_.reset();
  return path_;
}

}  // namespace planmill
