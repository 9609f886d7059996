#pragma once
// The chosen plans, and plan files, as one GIS layer of dissolved districts with their tallies
// (docs/export.md, "Plans back to GIS"). export_run.cpp drives it; gis_export.cpp holds it.
#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <utility>
#include <vector>

#include "planmill/export/export.hpp"
#include "planmill/geo/districts.hpp"
#include "planmill/plan/plan.hpp"

namespace planmill {

// Where the map came from: the units' shapes (--geometry, else the job's map.geometry, empty when
// it names none), the unit table and its id column, and the job file, for messages.
struct GisSource {
  std::string geometry, units_path, id_column, job_file;
};

class GisExport {
 public:
  // Everything that can be the user's mistake is checked here, before anything is written: the
  // format, the units' shapes (every unit of the map has one) and every plan file. Notes go to
  // `warnings`.
  GisExport(const ExportOptions& o, const GraphHandle& graph, std::span<const std::string> ids,
            const GisSource& source, std::size_t k, std::vector<std::string>& warnings);
  ~GisExport();

  // Opens the layer under a temporary name beside the final file.
  void start();
  // A chosen record: dissolved now, written when its chain is kept (a chain found damaged later
  // is dropped whole, as from the other files).
  void add_record(const RecordRef& ref, std::uint64_t step, const Plan& plan);
  void keep_chain();
  void drop_chain();
  // The plan files, then the file closed and flushed (still under its temporary name).
  void finish();
  // Renames the file into place; returns its path.
  std::string move_into_place();
  [[nodiscard]] std::size_t plans() const noexcept { return plans_; }

 private:
  void write(const geo::DistrictShapes& shapes, const std::vector<std::vector<geo::FieldValue>>& rows);
  [[nodiscard]] std::vector<std::vector<geo::FieldValue>> rows_of(const Plan& plan, geo::FieldValue name,
                                                                  geo::FieldValue chain, geo::FieldValue record,
                                                                  geo::FieldValue step) const;

  std::string path_, temp_path_;
  geo::LayerFormat format_;
  geo::UnitShapes shapes_;
  std::vector<geo::Field> fields_;
  std::vector<std::pair<std::string, Plan>> plan_files_;
  std::unique_ptr<geo::DistrictLayerWriter> writer_;
  std::vector<std::pair<geo::DistrictShapes, std::vector<std::vector<geo::FieldValue>>>> pending_;
  std::size_t plans_ = 0, pending_plans_ = 0;
};

}  // namespace planmill
