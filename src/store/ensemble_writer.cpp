// EnsembleWriter: an ensemble file built in memory (HDF5 core driver) and written in one piece
// on close(). Layout: docs/format.md.
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <filesystem>

#include "planmill/base/error.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/store/ensemble.hpp"
#include "planmill/store/hdf5_handle.hpp"
#include "store/ensemble_hdf5.hpp"

namespace planmill {

using namespace ensemble_hdf5;

namespace {

template <typename T>
void write_column(hid_t group, const char* name, hid_t file_type, hid_t mem_type,
                  const std::vector<T>& values, int deflate, const std::string& path) {
  const hsize_t chunk[1] = {std::clamp<hsize_t>(values.size(), 1, 1 << 16)};
  H5Dataset d = create_stream(group, name, file_type, chunk, deflate, true, path);
  append_rows(d.get(), mem_type, values.data(), 0, values.size(), 1, false, path,
              (std::string("writing ") + name).c_str());
}

void write_adjacency(hid_t root, const UnitAdjacency& adjacency, const std::string& path) {
  H5Group g =
      checked<H5Group>(H5Gcreate2(root, "unit_adjacency", H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT),
                       path, "creating group unit_adjacency");
  write_column(g.get(), "offsets", H5T_STD_U64LE, H5T_NATIVE_UINT64, adjacency.offsets, 6, path);
  write_column(g.get(), "neighbors", H5T_STD_U32LE, H5T_NATIVE_UINT32, adjacency.neighbors, 6,
               path);
}

void write_names(hid_t object, const std::vector<std::string>& names, const std::string& path,
                 const char* action) {
  H5Type t = utf8_string_type(path);
  const hsize_t n = names.size();
  H5Dataspace space = checked<H5Dataspace>(H5Screate_simple(1, &n, nullptr), path, action);
  H5Attribute attr = checked<H5Attribute>(
      H5Acreate2(object, "names", t.get(), space.get(), H5P_DEFAULT, H5P_DEFAULT), path, action);
  std::vector<const char*> p;
  for (const auto& s : names) p.push_back(s.c_str());
  check(H5Awrite(attr.get(), t.get(), p.data()), path, action);
}

}  // namespace

struct EnsembleWriter::Impl {
  struct ChainOut {
    std::uint64_t index = 0;
    H5Group group;
    H5Dataset bytes, records, observables;
    std::size_t observable_count = 0;
    H5Group sorted_group;
    std::vector<H5Dataset> sorted;  // one per sorted vector
    std::size_t sorted_width = 0;
    std::vector<double> sorted_buffer;  // per record: every vector in turn
    std::vector<double> slice;          // one vector's rows, reused
    std::unique_ptr<ChainEncoder> encoder;
    std::uint64_t record_count = 0;  // recorded so far, written or buffered
    std::uint64_t byte_count = 0;    // encoded bytes so far, written or buffered
    std::uint64_t written_records = 0, written_bytes = 0;
    std::vector<std::uint8_t> byte_buffer;
    std::vector<std::uint64_t> record_buffer;
    std::vector<double> observable_buffer;
  };

  std::string path;
  EnsembleHeader header;
  EnsembleWriterOptions options;
  std::size_t width = 1;
  H5File file;
  std::vector<ChainOut> chains;

  void write_pending(ChainOut& c) {
    const hsize_t buffered_records = c.record_buffer.size() / kIndexColumns;
    append_rows(c.bytes.get(), H5T_NATIVE_UINT8, c.byte_buffer.data(), c.written_bytes,
                c.byte_buffer.size(), 1, false, path, "appending to plan_bytes");
    append_rows(c.records.get(), H5T_NATIVE_UINT64, c.record_buffer.data(), c.written_records,
                buffered_records, kIndexColumns, true, path, "appending to plan_records");
    if (c.observable_count > 0)
      append_rows(c.observables.get(), H5T_NATIVE_DOUBLE, c.observable_buffer.data(),
                  c.written_records, buffered_records, c.observable_count, true, path,
                  "appending to observables");
    for (std::size_t v = 0; v < c.sorted.size(); ++v) {
      // Buffered records hold the vectors one after another; each dataset takes its own slice.
      const std::size_t stride = c.sorted.size() * c.sorted_width;
      c.slice.resize(buffered_records * c.sorted_width);
      for (std::size_t r = 0; r < buffered_records; ++r)
        std::copy_n(c.sorted_buffer.begin() + static_cast<std::ptrdiff_t>(r * stride + v * c.sorted_width),
                    c.sorted_width, c.slice.begin() + static_cast<std::ptrdiff_t>(r * c.sorted_width));
      append_rows(c.sorted[v].get(), H5T_NATIVE_DOUBLE, c.slice.data(), c.written_records,
                  buffered_records, c.sorted_width, true, path, "appending to a sorted vector");
    }
    c.sorted_buffer.clear();
    c.written_bytes += c.byte_buffer.size();
    c.written_records += buffered_records;
    c.byte_buffer.clear();
    c.record_buffer.clear();
    c.observable_buffer.clear();
  }
};

EnsembleWriter::EnsembleWriter(const std::string& path, const EnsembleHeader& header,
                               EnsembleWriterOptions options)
    : impl_(std::make_unique<Impl>()) {
  silence_hdf5_errors();
  Impl& m = *impl_;
  m.path = path;
  m.header = header;
  m.options = options;
  if (m.options.full_every == 0) m.options.full_every = 1;
  if (m.options.chunk_bytes == 0) m.options.chunk_bytes = 1 << 16;
  m.width = label_width(header.district_count);
  if (!header.adjacency.empty() && !header.adjacency.valid_for(header.unit_count))
    throw std::invalid_argument("EnsembleWriter: the unit adjacency does not fit " +
                                std::to_string(header.unit_count) + " units");
  const std::filesystem::path target(path);
  const std::string folder = target.has_parent_path() ? target.parent_path().string() : ".";
  if (::access(folder.c_str(), W_OK | X_OK) != 0) {
    throw OutputError(path + ": cannot write the file (folder " + folder + ": " +
                      std::strerror(errno) + "); check that the folder exists and is writable");
  }
  // The core driver without a backing store: HDF5 never touches the disk, close() does.
  H5PropList fapl =
      checked<H5PropList>(H5Pcreate(H5P_FILE_ACCESS), path, "creating a file access list");
  check(H5Pset_fapl_core(fapl.get(), std::size_t{1} << 20, 0), path,
        "choosing the in-memory file driver");
  m.file = checked<H5File>(H5Fcreate(path.c_str(), H5F_ACC_TRUNC, H5P_DEFAULT, fapl.get()), path,
                           "creating the ensemble file");
  const hid_t root = m.file.get();
  const std::int64_t version = kEnsembleFormatVersion;
  const std::uint64_t units = header.unit_count, districts = header.district_count;
  write_attribute(root, "format_version", H5T_STD_I64LE, &version, path);
  write_attribute(root, "unit_count", H5T_STD_U64LE, &units, path);
  write_attribute(root, "district_count", H5T_STD_U64LE, &districts, path);
  const std::uint64_t full_every = m.options.full_every;
  write_attribute(root, "full_every", H5T_STD_U64LE, &full_every, path);
  write_string_attribute(root, "job_text", header.job_text, path);
  if (!header.adjacency.empty()) write_adjacency(root, header.adjacency, path);
}

EnsembleWriter::~EnsembleWriter() = default;  // an unclosed file is dropped with the memory

std::size_t EnsembleWriter::add_chain(std::uint64_t chain_index,
                                      const std::vector<std::string>& names) {
  return add_chain(chain_index, names, {}, 0);
}

std::size_t EnsembleWriter::add_chain(std::uint64_t chain_index,
                                      const std::vector<std::string>& names,
                                      const std::vector<std::string>& sorted_names,
                                      std::size_t width) {
  Impl& m = *impl_;
  const std::string& path = m.path;
  Impl::ChainOut c;
  c.index = chain_index;
  c.observable_count = names.size();
  c.group = checked<H5Group>(H5Gcreate2(m.file.get(), chain_group_name(chain_index).c_str(),
                                        H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT),
                             path, ("creating group " + chain_group_name(chain_index)).c_str());
  write_attribute(c.group.get(), "chain_index", H5T_STD_U64LE, &chain_index, path);
  const hsize_t byte_chunk[1] = {m.options.chunk_bytes};
  c.bytes = create_stream(c.group.get(), "plan_bytes", H5T_STD_U8LE, byte_chunk,
                          m.options.deflate_level, false, path);
  const hsize_t index_chunk[2] = {kIndexChunkRows, kIndexColumns};
  c.records = create_stream(c.group.get(), "plan_records", H5T_STD_U64LE, index_chunk,
                            m.options.deflate_level, true, path);
  if (!names.empty()) {
    const hsize_t obs_chunk[2] = {kObservableChunkRows, names.size()};
    c.observables = create_stream(c.group.get(), "observables", H5T_IEEE_F64LE, obs_chunk,
                                  m.options.deflate_level, true, path);
    write_names(c.observables.get(), names, path, "writing observable names");
  }
  if (!sorted_names.empty()) {
    if (width == 0) throw std::invalid_argument("EnsembleWriter::add_chain: sorted vectors of width 0");
    c.sorted_width = width;
    c.sorted_group = checked<H5Group>(
        H5Gcreate2(c.group.get(), "sorted", H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT), path,
        "creating group sorted");
    write_names(c.sorted_group.get(), sorted_names, path, "writing sorted vector names");
    const hsize_t chunk[2] = {kObservableChunkRows, width};
    for (const auto& name : sorted_names)
      c.sorted.push_back(create_stream(c.sorted_group.get(), name.c_str(), H5T_IEEE_F64LE, chunk,
                                       m.options.deflate_level, true, path));
  }
  c.encoder = std::make_unique<ChainEncoder>(m.header.unit_count, m.header.district_count,
                                             &m.header.adjacency);
  m.chains.push_back(std::move(c));
  set_counters(m.chains.size() - 1, {});
  return m.chains.size() - 1;
}

void EnsembleWriter::record(std::size_t chain, std::uint64_t step,
                            std::span<const DistrictIndex> plan,
                            std::span<const double> observables) {
  record(chain, step, plan, observables, PlanChanges{});
}

void EnsembleWriter::record(std::size_t chain, std::uint64_t step,
                            std::span<const DistrictIndex> plan,
                            std::span<const double> observables, const PlanChanges& changes) {
  record(chain, step, plan, observables, changes, {});
}

void EnsembleWriter::record(std::size_t chain, std::uint64_t step,
                            std::span<const DistrictIndex> plan,
                            std::span<const double> observables, const PlanChanges& changes,
                            std::span<const double> sorted) {
  Impl& m = *impl_;
  Impl::ChainOut& c = m.chains.at(chain);
  if (plan.size() != m.header.unit_count)
    throw std::invalid_argument("EnsembleWriter::record: plan has " + std::to_string(plan.size()) +
                                " units, the file " + std::to_string(m.header.unit_count));
  if (observables.size() != c.observable_count)
    throw std::invalid_argument("EnsembleWriter::record: wrong number of observables");
  if (sorted.size() != c.sorted.size() * c.sorted_width)
    throw std::invalid_argument("EnsembleWriter::record: wrong number of sorted values");
  const std::size_t before = c.byte_buffer.size();
  RecordKind kind = RecordKind::full;
  try {
    const bool self_contained = c.record_count % m.options.full_every == 0;
    kind = changes.overflowed
               ? c.encoder->encode(plan, self_contained, c.byte_buffer)
               : c.encoder->encode(plan, changes.units, self_contained, c.byte_buffer);
  } catch (...) {
    c.byte_buffer.resize(before);
    throw;
  }
  const std::uint64_t length = c.byte_buffer.size() - before;
  c.record_buffer.insert(c.record_buffer.end(),
                         {step, c.byte_count, length, static_cast<std::uint64_t>(kind)});
  c.observable_buffer.insert(c.observable_buffer.end(), observables.begin(), observables.end());
  c.sorted_buffer.insert(c.sorted_buffer.end(), sorted.begin(), sorted.end());
  c.byte_count += length;
  ++c.record_count;
  if (c.byte_buffer.size() >= m.options.chunk_bytes ||
      c.record_buffer.size() >= kIndexChunkRows * kIndexColumns)
    m.write_pending(c);
}

void EnsembleWriter::set_counters(std::size_t chain, const StoredCounters& counters) {
  Impl& m = *impl_;
  const hid_t g = m.chains.at(chain).group.get();
  const std::uint64_t values[] = {counters.steps, counters.accepted, counters.rejected,
                                  counters.no_cut, counters.invalid};
  for (std::size_t i = 0; i < 5; ++i)
    write_attribute(g, kCounterNames[i], H5T_STD_U64LE, &values[i], m.path);
}

void EnsembleWriter::close() {
  Impl& m = *impl_;
  if (!m.file.valid()) throw std::logic_error("EnsembleWriter::close: closed already");
  const std::string& path = m.path;
  for (auto& c : m.chains) m.write_pending(c);
  for (auto& c : m.chains) {
    check(c.observables.close(), path, "closing observables");
    for (auto& d : c.sorted) check(d.close(), path, "closing a sorted vector");
    check(c.sorted_group.close(), path, "closing group sorted");
    check(c.records.close(), path, "closing plan_records");
    check(c.bytes.close(), path, "closing plan_bytes");
    check(c.group.close(), path, "closing a chain group");
  }
  check(H5Fflush(m.file.get(), H5F_SCOPE_GLOBAL), path, "finishing the ensemble file");
  const ssize_t size = H5Fget_file_image(m.file.get(), nullptr, 0);
  if (size < 0) throw StoreError(path, "sizing the ensemble file", hdf5_error_stack());
  std::string image(static_cast<std::size_t>(size), '\0');
  if (H5Fget_file_image(m.file.get(), image.data(), image.size()) != size)
    throw StoreError(path, "copying the ensemble file", hdf5_error_stack());
  check(m.file.close(), path, "closing the ensemble file");
  m.chains.clear();
  write_file_atomically(path, image);
}

std::uint64_t EnsembleWriter::encoded_bytes() const noexcept {
  std::uint64_t total = 0;
  for (const auto& c : impl_->chains) total += c.byte_count;
  return total;
}

}  // namespace planmill
