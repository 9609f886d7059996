#pragma once
// PlanMatrixWriter: chosen plans as one dense HDF5 matrix, plans x units, that h5py and rhdf5 read
// with HDF5's own filters (layout in docs/format.md, "Plan matrix"). Cells hold districts 1..k,
// uint8 when k <= 255, else uint16; rows are chunked and compressed with shuffle + deflate. The
// file is built in memory (compressed chunk by chunk as rows arrive) and written whole by close(),
// atomically; a writer dropped unclosed writes nothing.
#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <vector>

#include "planmill/base/ids.hpp"

namespace planmill {

struct PlanMatrixHeader {
  std::vector<std::string> unit_ids;  // column order (the map's unit order)
  std::size_t district_count = 0;     // k, 1..65535
  std::uint64_t rung = 0;
  std::string run_id, job_sha256, planmill_version;  // the run the plans come from
  std::uint64_t expected_rows = 0;  // if known: chunks are no taller than the matrix; 0 = unknown
};

class PlanMatrixWriter {
 public:
  // StoreError when HDF5 refuses; std::invalid_argument on k = 0 or no units.
  PlanMatrixWriter(std::string path, PlanMatrixHeader header);
  ~PlanMatrixWriter();
  PlanMatrixWriter(const PlanMatrixWriter&) = delete;
  PlanMatrixWriter& operator=(const PlanMatrixWriter&) = delete;

  // Appends a row: labels[u] in 0..k-1 (stored as 1..k). std::invalid_argument on a wrong size.
  void add(std::uint64_t chain, std::uint64_t record, std::uint64_t step,
           std::span<const DistrictIndex> labels);
  [[nodiscard]] std::uint64_t rows() const noexcept;
  // Forgets rows `row` and after (a chain found damaged part-way is left out whole).
  void drop_rows_from(std::uint64_t row);
  // Writes the row names and the file: OutputError naming the path when the disk refuses.
  void close();

  // Rows per chunk for a map of `units` units with `cell_bytes` per cell: about 1 MiB per chunk.
  [[nodiscard]] static std::uint64_t chunk_rows(std::size_t units, std::size_t cell_bytes) noexcept;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace planmill
