// PlanMatrixWriter on HDF5's in-memory (core) driver: full chunks of rows go to the dataset as
// they fill, so memory holds one uncompressed chunk and the compressed file; close() writes it.
#include "planmill/export/plan_matrix.hpp"

#include <algorithm>
#include <stdexcept>

#include "planmill/io/atomic_file.hpp"
#include "planmill/store/hdf5_handle.hpp"

namespace planmill {
namespace {

constexpr unsigned kDeflateLevel = 4;  // common practice: most of level 9's gain for far less time
constexpr std::size_t kChunkBytes = std::size_t{1} << 20;

// A 1-D dataset written whole; `values` holds `count` elements of `type`.
void put_column(hid_t file, const char* name, hid_t type, const void* values, hsize_t count,
                const std::string& path) {
  H5Dataspace space = checked<H5Dataspace>(H5Screate_simple(1, &count, nullptr), path, name);
  H5Dataset d = checked<H5Dataset>(
      H5Dcreate2(file, name, type, space.get(), H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT), path, name);
  if (count > 0) check(H5Dwrite(d.get(), type, H5S_ALL, H5S_ALL, H5P_DEFAULT, values), path, name);
}

}  // namespace

struct PlanMatrixWriter::Impl {
  std::string path;
  PlanMatrixHeader header;
  std::size_t units = 0, cell_bytes = 1;
  hsize_t chunk = 1;
  H5File file;
  H5Dataset plans;
  hid_t cell_type = H5T_STD_U8LE;
  std::uint64_t flushed = 0;        // rows in the dataset
  std::vector<std::uint8_t> bytes;  // rows after `flushed`, cell_bytes each, little-endian
  std::vector<std::uint64_t> chain, record, step;

  [[nodiscard]] std::uint64_t pending() const { return bytes.size() / (units * cell_bytes); }

  void flush() {
    const hsize_t rows = pending();
    if (rows == 0) return;
    const hsize_t dims[2] = {flushed + rows, units};
    check(H5Dset_extent(plans.get(), dims), path, "growing the plan matrix");
    H5Dataspace file_space = checked<H5Dataspace>(H5Dget_space(plans.get()), path, "plan matrix");
    const hsize_t start[2] = {flushed, 0}, count[2] = {rows, units};
    check(H5Sselect_hyperslab(file_space.get(), H5S_SELECT_SET, start, nullptr, count, nullptr),
          path, "selecting rows of the plan matrix");
    H5Dataspace memory = checked<H5Dataspace>(H5Screate_simple(2, count, nullptr), path, "rows");
    check(
        H5Dwrite(plans.get(), cell_type, memory.get(), file_space.get(), H5P_DEFAULT, bytes.data()),
        path, "writing rows of the plan matrix");
    flushed += rows;
    bytes.clear();
  }
};

std::uint64_t PlanMatrixWriter::chunk_rows(std::size_t units, std::size_t cell_bytes) noexcept {
  return std::max<std::uint64_t>(1, kChunkBytes / std::max<std::size_t>(1, units * cell_bytes));
}

PlanMatrixWriter::PlanMatrixWriter(std::string path, PlanMatrixHeader header)
    : impl_(std::make_unique<Impl>()) {
  Impl& m = *impl_;
  if (header.district_count == 0 || header.district_count > 65535 || header.unit_ids.empty()) {
    throw std::invalid_argument("PlanMatrixWriter: needs 1..65535 districts and some units");
  }
  m.path = std::move(path);
  m.units = header.unit_ids.size();
  m.cell_bytes = header.district_count <= 255 ? 1 : 2;
  m.cell_type = m.cell_bytes == 1 ? H5T_STD_U8LE : H5T_STD_U16LE;
  m.chunk = chunk_rows(m.units, m.cell_bytes);
  if (header.expected_rows > 0) m.chunk = std::min<hsize_t>(m.chunk, header.expected_rows);
  m.bytes.reserve(m.chunk * m.units * m.cell_bytes);
  m.header = std::move(header);
  silence_hdf5_errors();
  const std::string& p = m.path;
  // In memory, grown 8 MiB at a time; never backed by the disk (close() writes the image).
  H5PropList fapl = checked<H5PropList>(H5Pcreate(H5P_FILE_ACCESS), p, "file access list");
  check(H5Pset_fapl_core(fapl.get(), std::size_t{8} << 20, 0), p, "the in-memory file driver");
  m.file = checked<H5File>(H5Fcreate(p.c_str(), H5F_ACC_TRUNC, H5P_DEFAULT, fapl.get()), p,
                           "creating the plan matrix file");
  const hsize_t dims[2] = {0, m.units}, maxdims[2] = {H5S_UNLIMITED, m.units};
  const hsize_t chunk[2] = {m.chunk, m.units};
  H5Dataspace space = checked<H5Dataspace>(H5Screate_simple(2, dims, maxdims), p, "matrix space");
  H5PropList dcpl = checked<H5PropList>(H5Pcreate(H5P_DATASET_CREATE), p, "dataset properties");
  check(H5Pset_chunk(dcpl.get(), 2, chunk), p, "setting the chunk shape");
  check(H5Pset_shuffle(dcpl.get()), p, "setting the shuffle filter");
  check(H5Pset_deflate(dcpl.get(), kDeflateLevel), p, "setting the deflate filter");
  m.plans = checked<H5Dataset>(H5Dcreate2(m.file.get(), "plans", m.cell_type, space.get(),
                                          H5P_DEFAULT, dcpl.get(), H5P_DEFAULT),
                               p, "creating dataset plans");
}

PlanMatrixWriter::~PlanMatrixWriter() = default;

std::uint64_t PlanMatrixWriter::rows() const noexcept { return impl_->flushed + impl_->pending(); }

void PlanMatrixWriter::add(std::uint64_t chain, std::uint64_t record, std::uint64_t step,
                           std::span<const DistrictIndex> labels) {
  Impl& m = *impl_;
  if (labels.size() != m.units) throw std::invalid_argument("PlanMatrixWriter::add: wrong size");
  for (const DistrictIndex d : labels) {
    const unsigned label = static_cast<unsigned>(d) + 1;
    m.bytes.push_back(static_cast<std::uint8_t>(label & 0xFF));
    if (m.cell_bytes == 2) m.bytes.push_back(static_cast<std::uint8_t>(label >> 8));
  }
  m.chain.push_back(chain);
  m.record.push_back(record);
  m.step.push_back(step);
  if (m.pending() == m.chunk) m.flush();
}

void PlanMatrixWriter::drop_rows_from(std::uint64_t row) {
  Impl& m = *impl_;
  if (row >= rows()) return;
  if (row >= m.flushed) {
    m.bytes.resize((row - m.flushed) * m.units * m.cell_bytes);
  } else {
    m.bytes.clear();
    m.flushed = row;  // later rows overwrite these; close() cuts the dataset to its rows
  }
  m.chain.resize(row);
  m.record.resize(row);
  m.step.resize(row);
}

void PlanMatrixWriter::close() {
  Impl& m = *impl_;
  if (!m.file.valid()) throw std::logic_error("PlanMatrixWriter::close: closed already");
  const std::string& p = m.path;
  m.flush();
  const hsize_t dims[2] = {m.flushed, m.units};
  check(H5Dset_extent(m.plans.get(), dims), p, "sizing the plan matrix");
  check(m.plans.close(), p, "closing dataset plans");
  const hid_t f = m.file.get();
  const hsize_t rows = m.chain.size();
  put_column(f, "chain", H5T_STD_U64LE, m.chain.data(), rows, p);
  put_column(f, "record", H5T_STD_U64LE, m.record.data(), rows, p);
  put_column(f, "step", H5T_STD_U64LE, m.step.data(), rows, p);
  std::vector<const char*> ids;
  ids.reserve(m.units);
  for (const std::string& id : m.header.unit_ids) ids.push_back(id.c_str());
  const H5Type text = utf8_string_type(p);
  put_column(f, "unit", text.get(), ids.data(), ids.size(), p);
  const std::uint64_t k = m.header.district_count, first = 1, rung = m.header.rung;
  write_attribute(f, "district_count", H5T_STD_U64LE, &k, p);
  write_attribute(f, "first_label", H5T_STD_U64LE, &first, p);
  write_attribute(f, "rung", H5T_STD_U64LE, &rung, p);
  write_string_attribute(f, "run_id", m.header.run_id, p);
  write_string_attribute(f, "job_sha256", m.header.job_sha256, p);
  write_string_attribute(f, "planmill_version", m.header.planmill_version, p);
  check(H5Fflush(f, H5F_SCOPE_GLOBAL), p, "finishing the plan matrix file");
  const ssize_t size = H5Fget_file_image(f, nullptr, 0);
  if (size < 0) throw StoreError(p, "sizing the plan matrix file", hdf5_error_stack());
  std::string image(static_cast<std::size_t>(size), '\0');
  if (H5Fget_file_image(f, image.data(), image.size()) != size) {
    throw StoreError(p, "copying the plan matrix file", hdf5_error_stack());
  }
  check(m.file.close(), p, "closing the plan matrix file");
  write_file_atomically(p, image);
}

}  // namespace planmill
