// EnsembleWriter (HDF5 core driver, in memory until close) / EnsembleReader (serial driver) over
// the HDF5 C API. Layout: docs/format.md.
#include "planmill/store/ensemble.hpp"

#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <map>
#include <optional>

#include "planmill/base/error.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/store/hdf5_handle.hpp"

namespace planmill {
namespace {

constexpr std::size_t kIndexColumns = 4;  // step, offset, length, kind
constexpr hsize_t kIndexChunkRows = 1024;
constexpr hsize_t kObservableChunkRows = 256;
const char* const kCounterNames[] = {"steps", "accepted", "rejected", "no_cut", "invalid"};

std::string chain_group_name(std::uint64_t index) { return "chain_" + std::to_string(index); }

H5Type vlen_string_type(const std::string& path) {
  H5Type t = checked<H5Type>(H5Tcopy(H5T_C_S1), path, "making a string type");
  check(H5Tset_size(t.get(), H5T_VARIABLE), path, "making a string type");
  check(H5Tset_cset(t.get(), H5T_CSET_UTF8), path, "making a string type");
  return t;
}

void write_attribute(hid_t object, const char* name, hid_t type, const void* value,
                     const std::string& path) {
  if (H5Aexists(object, name) > 0) check(H5Adelete(object, name), path, "replacing an attribute");
  H5Dataspace space = checked<H5Dataspace>(H5Screate(H5S_SCALAR), path, "writing an attribute");
  H5Attribute attr =
      checked<H5Attribute>(H5Acreate2(object, name, type, space.get(), H5P_DEFAULT, H5P_DEFAULT),
                           path, (std::string("creating attribute ") + name).c_str());
  check(H5Awrite(attr.get(), type, value), path,
        (std::string("writing attribute ") + name).c_str());
}

void write_string_attribute(hid_t object, const char* name, const std::string& value,
                            const std::string& path) {
  H5Type t = vlen_string_type(path);
  const char* p = value.c_str();
  write_attribute(object, name, t.get(), &p, path);
}

template <typename T>
T read_scalar_attribute(hid_t object, const char* name, hid_t mem_type, const std::string& path) {
  const std::string action = std::string("reading attribute ") + name;
  H5Attribute attr = checked<H5Attribute>(H5Aopen(object, name, H5P_DEFAULT), path, action.c_str());
  T value{};
  check(H5Aread(attr.get(), mem_type, &value), path, action.c_str());
  return value;
}

std::string read_string_attribute(hid_t object, const char* name, const std::string& path) {
  const std::string action = std::string("reading attribute ") + name;
  H5Attribute attr = checked<H5Attribute>(H5Aopen(object, name, H5P_DEFAULT), path, action.c_str());
  H5Type t = vlen_string_type(path);
  char* p = nullptr;
  check(H5Aread(attr.get(), t.get(), &p), path, action.c_str());
  std::string value = p ? p : "";
  H5free_memory(p);
  return value;
}

H5Dataset create_stream(hid_t group, const char* name, hid_t type, std::span<const hsize_t> chunk,
                        int deflate, bool shuffle, const std::string& path) {
  const int rank = static_cast<int>(chunk.size());
  std::vector<hsize_t> dims(chunk.size(), 0), maxdims(chunk.size(), H5S_UNLIMITED);
  for (std::size_t i = 1; i < chunk.size(); ++i) dims[i] = maxdims[i] = chunk[i];
  H5Dataspace space = checked<H5Dataspace>(H5Screate_simple(rank, dims.data(), maxdims.data()),
                                           path, "creating a dataspace");
  H5PropList dcpl =
      checked<H5PropList>(H5Pcreate(H5P_DATASET_CREATE), path, "creating a property list");
  check(H5Pset_chunk(dcpl.get(), rank, chunk.data()), path, "setting the chunk size");
  check(H5Pset_fletcher32(dcpl.get()), path, "setting the fletcher32 filter");
  if (shuffle) check(H5Pset_shuffle(dcpl.get()), path, "setting the shuffle filter");
  check(H5Pset_deflate(dcpl.get(), static_cast<unsigned>(deflate)), path,
        "setting the deflate filter");
  return checked<H5Dataset>(
      H5Dcreate2(group, name, type, space.get(), H5P_DEFAULT, dcpl.get(), H5P_DEFAULT), path,
      (std::string("creating dataset ") + name).c_str());
}

// Appends `rows` rows of `columns` values (row-major) after row `at`.
void append_rows(hid_t dset, hid_t mem_type, const void* data, hsize_t at, hsize_t rows,
                 hsize_t columns, bool two_d, const std::string& path, const char* action) {
  if (rows == 0) return;
  const hsize_t new_dims[2] = {at + rows, columns};
  check(H5Dset_extent(dset, new_dims), path, action);
  H5Dataspace file_space = checked<H5Dataspace>(H5Dget_space(dset), path, action);
  const hsize_t start[2] = {at, 0}, count[2] = {rows, columns};
  check(H5Sselect_hyperslab(file_space.get(), H5S_SELECT_SET, start, nullptr, count, nullptr), path,
        action);
  H5Dataspace mem_space =
      checked<H5Dataspace>(H5Screate_simple(two_d ? 2 : 1, count, nullptr), path, action);
  check(H5Dwrite(dset, mem_type, mem_space.get(), file_space.get(), H5P_DEFAULT, data), path,
        action);
}

// Reads rows [first, first + rows) of a 1-D or 2-D dataset.
void read_rows(hid_t dset, hid_t mem_type, void* data, hsize_t first, hsize_t rows, hsize_t columns,
               bool two_d, const std::string& path, const char* action) {
  if (rows == 0) return;
  H5Dataspace file_space = checked<H5Dataspace>(H5Dget_space(dset), path, action);
  const hsize_t start[2] = {first, 0}, count[2] = {rows, columns};
  check(H5Sselect_hyperslab(file_space.get(), H5S_SELECT_SET, start, nullptr, count, nullptr), path,
        action);
  H5Dataspace mem_space =
      checked<H5Dataspace>(H5Screate_simple(two_d ? 2 : 1, count, nullptr), path, action);
  check(H5Dread(dset, mem_type, mem_space.get(), file_space.get(), H5P_DEFAULT, data), path,
        action);
}

std::vector<hsize_t> dims_of(hid_t dset, const std::string& path) {
  H5Dataspace space = checked<H5Dataspace>(H5Dget_space(dset), path, "reading a dataset's size");
  const int rank = H5Sget_simple_extent_ndims(space.get());
  if (rank < 0) throw StoreError(path, "reading a dataset's size", hdf5_error_stack());
  std::vector<hsize_t> dims(static_cast<std::size_t>(rank));
  check(H5Sget_simple_extent_dims(space.get(), dims.data(), nullptr), path,
        "reading a dataset's size");
  return dims;
}

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

template <typename T>
std::vector<T> read_column(hid_t group, const char* name, hid_t mem_type, const std::string& path) {
  H5Dataset d = checked<H5Dataset>(H5Dopen2(group, name, H5P_DEFAULT), path,
                                   (std::string("opening unit_adjacency/") + name).c_str());
  const auto dims = dims_of(d.get(), path);
  if (dims.size() != 1) throw StoreError(path, "reading unit_adjacency", "not a 1-D dataset");
  std::vector<T> values(dims[0]);
  read_rows(d.get(), mem_type, values.data(), 0, dims[0], 1, false, path,
            (std::string("reading unit_adjacency/") + name).c_str());
  return values;
}

}  // namespace

// ---------------------------------------------------------------------------------------- writer

struct EnsembleWriter::Impl {
  struct ChainOut {
    std::uint64_t index = 0;
    H5Group group;
    H5Dataset bytes, records, observables;
    std::size_t observable_count = 0;
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
    H5Type t = vlen_string_type(path);
    const hsize_t n = names.size();
    H5Dataspace space =
        checked<H5Dataspace>(H5Screate_simple(1, &n, nullptr), path, "writing observable names");
    H5Attribute attr = checked<H5Attribute>(
        H5Acreate2(c.observables.get(), "names", t.get(), space.get(), H5P_DEFAULT, H5P_DEFAULT),
        path, "writing observable names");
    std::vector<const char*> p;
    for (const auto& s : names) p.push_back(s.c_str());
    check(H5Awrite(attr.get(), t.get(), p.data()), path, "writing observable names");
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
  Impl& m = *impl_;
  Impl::ChainOut& c = m.chains.at(chain);
  if (plan.size() != m.header.unit_count)
    throw std::invalid_argument("EnsembleWriter::record: plan has " + std::to_string(plan.size()) +
                                " units, the file " + std::to_string(m.header.unit_count));
  if (observables.size() != c.observable_count)
    throw std::invalid_argument("EnsembleWriter::record: wrong number of observables");
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

// ---------------------------------------------------------------------------------------- reader

struct EnsembleReader::Impl {
  std::string path;
  H5File file;
  EnsembleHeader header;
  std::int64_t version = 0;
  std::size_t width = 1;
  std::vector<std::uint64_t> chain_indices;
  mutable std::map<std::uint64_t, std::vector<std::uint64_t>> index_cache;

  H5Group group(std::uint64_t chain) const {
    const std::string name = chain_group_name(chain);
    return checked<H5Group>(H5Gopen2(file.get(), name.c_str(), H5P_DEFAULT), path,
                            ("opening group " + name).c_str());
  }
  H5Dataset dataset(const H5Group& g, const char* name) const {
    return checked<H5Dataset>(H5Dopen2(g.get(), name, H5P_DEFAULT), path,
                              (std::string("opening ") + name).c_str());
  }
  std::vector<std::uint64_t> read_index_uncached(std::uint64_t chain) const {
    H5Group g = group(chain);
    H5Dataset d = dataset(g, "plan_records");
    const auto dims = dims_of(d.get(), path);
    if (dims.size() != 2 || dims[1] != kIndexColumns)
      throw StoreError(path, "reading plan_records of " + chain_group_name(chain),
                       "not a records x 4 table");
    std::vector<std::uint64_t> index(dims[0] * kIndexColumns);
    read_rows(d.get(), H5T_NATIVE_UINT64, index.data(), 0, dims[0], kIndexColumns, true, path,
              "reading plan_records");
    return index;
  }
  const std::vector<std::uint64_t>& index(std::uint64_t chain) const {
    auto it = index_cache.find(chain);
    if (it == index_cache.end()) it = index_cache.emplace(chain, read_index_uncached(chain)).first;
    return it->second;
  }
};

EnsembleReader::EnsembleReader(const std::string& path) : impl_(std::make_unique<Impl>()) {
  silence_hdf5_errors();
  Impl& m = *impl_;
  m.path = path;
  H5PropList fapl =
      checked<H5PropList>(H5Pcreate(H5P_FILE_ACCESS), path, "creating a file access list");
  check(H5Pset_fapl_sec2(fapl.get()), path, "choosing the serial file driver");
  m.file = checked<H5File>(H5Fopen(path.c_str(), H5F_ACC_RDONLY, fapl.get()), path,
                           "opening the ensemble file");
  const hid_t root = m.file.get();
  m.version = read_scalar_attribute<std::int64_t>(root, "format_version", H5T_NATIVE_INT64, path);
  if (m.version < 1 || m.version > kEnsembleFormatVersion)
    throw StoreError(path, "reading format_version",
                     "version " + std::to_string(m.version) + ", this planmill reads " +
                         std::to_string(kEnsembleFormatVersion));
  m.header.unit_count =
      read_scalar_attribute<std::uint64_t>(root, "unit_count", H5T_NATIVE_UINT64, path);
  m.header.district_count =
      read_scalar_attribute<std::uint64_t>(root, "district_count", H5T_NATIVE_UINT64, path);
  m.header.job_text = read_string_attribute(root, "job_text", path);
  m.width = label_width(m.header.district_count);
  if (H5Lexists(root, "unit_adjacency", H5P_DEFAULT) > 0) {
    H5Group g = checked<H5Group>(H5Gopen2(root, "unit_adjacency", H5P_DEFAULT), path,
                                 "opening group unit_adjacency");
    m.header.adjacency.offsets =
        read_column<std::uint64_t>(g.get(), "offsets", H5T_NATIVE_UINT64, path);
    m.header.adjacency.neighbors =
        read_column<std::uint32_t>(g.get(), "neighbors", H5T_NATIVE_UINT32, path);
    if (!m.header.adjacency.valid_for(m.header.unit_count))
      throw StoreError(path, "reading unit_adjacency",
                       "not a CSR adjacency of " + std::to_string(m.header.unit_count) + " units");
  }
  H5G_info_t info;
  check(H5Gget_info(root, &info), path, "listing chains");
  for (hsize_t i = 0; i < info.nlinks; ++i) {
    char name[256];
    if (H5Lget_name_by_idx(root, ".", H5_INDEX_NAME, H5_ITER_INC, i, name, sizeof name,
                           H5P_DEFAULT) < 0)
      throw StoreError(path, "listing chains", hdf5_error_stack());
    const std::string s = name;
    if (s.rfind("chain_", 0) != 0 || s.size() == 6 ||
        s.find_first_not_of("0123456789", 6) != std::string::npos)
      continue;
    m.chain_indices.push_back(std::stoull(s.substr(6)));
  }
  std::sort(m.chain_indices.begin(), m.chain_indices.end());
}

EnsembleReader::~EnsembleReader() = default;

const EnsembleHeader& EnsembleReader::header() const noexcept { return impl_->header; }
std::int64_t EnsembleReader::format_version() const noexcept { return impl_->version; }
std::vector<std::uint64_t> EnsembleReader::chains() const { return impl_->chain_indices; }

std::size_t EnsembleReader::record_count(std::uint64_t chain) const {
  return impl_->index(chain).size() / kIndexColumns;
}

std::vector<std::uint64_t> EnsembleReader::record_steps(std::uint64_t chain) const {
  const auto& index = impl_->index(chain);
  std::vector<std::uint64_t> steps;
  for (std::size_t i = 0; i < index.size(); i += kIndexColumns) steps.push_back(index[i]);
  return steps;
}

std::vector<DistrictIndex> EnsembleReader::read_plan(std::uint64_t chain,
                                                     std::size_t record) const {
  std::vector<DistrictIndex> plan;
  for_each_plan(chain, record, record, [&](std::size_t, std::span<const DistrictIndex> p) {
    plan.assign(p.begin(), p.end());
  });
  return plan;
}

void EnsembleReader::for_each_plan(
    std::uint64_t chain, std::size_t first, std::size_t last,
    const std::function<void(std::size_t, std::span<const DistrictIndex>)>& visit) const {
  const Impl& m = *impl_;
  const auto& index = m.index(chain);
  const std::size_t records = index.size() / kIndexColumns;
  const std::string where =
      chain_group_name(chain) + " records " + std::to_string(first) + ".." + std::to_string(last);
  if (first > last || last >= records)
    throw std::out_of_range("EnsembleReader: no " + where + " (" + std::to_string(records) +
                            " records)");
  std::size_t start = first;
  auto self_contained = [&](std::size_t r) {
    const std::uint64_t kind = index[r * kIndexColumns + 3];
    return kind < kRecordKindCount && is_self_contained(static_cast<RecordKind>(kind));
  };
  while (start > 0 && !self_contained(start)) --start;
  if (!self_contained(start))
    throw StoreError(m.path, "reading " + where, "no self-contained plan before it");
  const std::uint64_t begin = index[start * kIndexColumns + 1];
  const std::uint64_t end = index[last * kIndexColumns + 1] + index[last * kIndexColumns + 2];
  if (end < begin) throw StoreError(m.path, "reading " + where, "inconsistent plan_records");
  H5Group g = m.group(chain);
  H5Dataset d = m.dataset(g, "plan_bytes");
  if (dims_of(d.get(), m.path).at(0) < end)
    throw StoreError(m.path, "reading " + where,
                     "plan_bytes is shorter than plan_records says (truncated)");
  std::vector<std::uint8_t> bytes(end - begin);
  read_rows(d.get(), H5T_NATIVE_UINT8, bytes.data(), begin, end - begin, 1, false, m.path,
            ("reading plan_bytes for " + where).c_str());
  std::vector<DistrictIndex> plan(m.header.unit_count);
  for (std::size_t r = start; r <= last; ++r) {
    const std::uint64_t* row = &index[r * kIndexColumns];
    if (row[1] < begin || row[1] + row[2] > end || row[3] >= kRecordKindCount)
      throw StoreError(m.path, "reading " + where, "inconsistent plan_records");
    const std::span<const std::uint8_t> b(bytes.data() + (row[1] - begin), row[2]);
    if (!decode_record(static_cast<RecordKind>(row[3]), b, m.width, m.header.district_count, plan,
                       &m.header.adjacency))
      throw StoreError(m.path, "reading " + where,
                       "record " + std::to_string(r) + " does not decode");
    if (r >= first) visit(r, plan);
  }
}

std::vector<std::string> EnsembleReader::observable_names(std::uint64_t chain) const {
  const Impl& m = *impl_;
  H5Group g = m.group(chain);
  if (H5Lexists(g.get(), "observables", H5P_DEFAULT) <= 0) return {};
  H5Dataset d = m.dataset(g, "observables");
  H5Attribute attr = checked<H5Attribute>(H5Aopen(d.get(), "names", H5P_DEFAULT), m.path,
                                          "reading observable names");
  H5Dataspace space =
      checked<H5Dataspace>(H5Aget_space(attr.get()), m.path, "reading observable names");
  const hssize_t n = H5Sget_simple_extent_npoints(space.get());
  if (n < 0) throw StoreError(m.path, "reading observable names", hdf5_error_stack());
  H5Type t = vlen_string_type(m.path);
  std::vector<char*> p(static_cast<std::size_t>(n), nullptr);
  check(H5Aread(attr.get(), t.get(), p.data()), m.path, "reading observable names");
  std::vector<std::string> names;
  for (char* s : p) names.emplace_back(s ? s : "");
  (void)H5Dvlen_reclaim(t.get(), space.get(), H5P_DEFAULT, p.data());
  return names;
}

std::vector<double> EnsembleReader::read_observables(std::uint64_t chain) const {
  const Impl& m = *impl_;
  H5Group g = m.group(chain);
  if (H5Lexists(g.get(), "observables", H5P_DEFAULT) <= 0) return {};
  H5Dataset d = m.dataset(g, "observables");
  const auto dims = dims_of(d.get(), m.path);
  std::vector<double> values(dims.at(0) * dims.at(1));
  read_rows(d.get(), H5T_NATIVE_DOUBLE, values.data(), 0, dims[0], dims[1], true, m.path,
            "reading observables");
  return values;
}

StoredCounters EnsembleReader::counters(std::uint64_t chain) const {
  const Impl& m = *impl_;
  H5Group g = m.group(chain);
  std::uint64_t v[5];
  for (std::size_t i = 0; i < 5; ++i)
    v[i] =
        read_scalar_attribute<std::uint64_t>(g.get(), kCounterNames[i], H5T_NATIVE_UINT64, m.path);
  return {v[0], v[1], v[2], v[3], v[4]};
}

std::vector<ChainProblem> EnsembleReader::verify() const {
  const Impl& m = *impl_;
  std::vector<ChainProblem> problems;
  constexpr std::uint64_t kAll = static_cast<std::uint64_t>(-1);
  for (std::uint64_t chain : m.chain_indices) {
    auto report = [&](std::uint64_t first, std::uint64_t last, std::string what) {
      problems.push_back({chain, first, last, chain_group_name(chain) + ": " + std::move(what)});
    };
    std::vector<std::uint64_t> index;
    try {
      index = m.read_index_uncached(chain);
    } catch (const StoreError& e) {
      report(0, kAll, std::string("plan_records unreadable: ") + e.what());
      continue;
    }
    const std::size_t records = index.size() / kIndexColumns;
    if (records == 0) continue;
    const std::uint64_t last = records - 1;
    // The index must describe back-to-back byte ranges starting with a full plan.
    std::size_t consistent = records;
    for (std::size_t r = 0; r < records && consistent == records; ++r) {
      const std::uint64_t* row = &index[r * kIndexColumns];
      const std::uint64_t expected_offset =
          r ? index[(r - 1) * kIndexColumns + 1] + index[(r - 1) * kIndexColumns + 2] : 0;
      const bool ok = row[3] < kRecordKindCount && row[1] == expected_offset &&
                      (r > 0 || is_self_contained(static_cast<RecordKind>(row[3]))) &&
                      (r == 0 || row[0] >= index[(r - 1) * kIndexColumns]);
      if (!ok) consistent = r;
    }
    if (consistent < records)
      report(consistent, last,
             "plan_records inconsistent from record " + std::to_string(consistent));
    std::vector<std::uint8_t> bytes;
    std::vector<bool> good;  // per record: its bytes were read without error
    try {
      H5Group g = m.group(chain);
      H5Dataset d = m.dataset(g, "plan_bytes");
      const hsize_t size = dims_of(d.get(), m.path).at(0);
      bytes.resize(size);
      H5PropList dcpl =
          checked<H5PropList>(H5Dget_create_plist(d.get()), m.path, "reading chunk size");
      hsize_t chunk = 1 << 16;
      if (H5Pget_chunk(dcpl.get(), 1, &chunk) < 0) chunk = 1 << 16;
      std::vector<std::pair<hsize_t, hsize_t>> bad;
      for (hsize_t at = 0; at < size; at += chunk) {
        const hsize_t n = std::min(chunk, size - at);
        try {
          read_rows(d.get(), H5T_NATIVE_UINT8, bytes.data() + at, at, n, 1, false, m.path,
                    "reading plan_bytes");
        } catch (const StoreError&) {
          bad.emplace_back(at, at + n);
        }
      }
      good.assign(records, true);
      std::size_t truncated_from = records;
      for (std::size_t r = 0; r < consistent; ++r) {
        const std::uint64_t b = index[r * kIndexColumns + 1], e = b + index[r * kIndexColumns + 2];
        if (e > size) {
          truncated_from = r;
          break;
        }
        for (auto [lo, hi] : bad)
          if (b < hi && e > lo) good[r] = false;
      }
      if (truncated_from < consistent) {
        report(truncated_from, consistent - 1,
               "plan_bytes truncated: it holds " + std::to_string(size) +
                   " bytes, plan_records needs more");
        consistent = truncated_from;
      }
      // Decode in order: a bad record spoils everything up to the next readable full plan.
      std::vector<DistrictIndex> plan(m.header.unit_count);
      bool have_plan = false;
      std::size_t bad_from = records;
      auto close_bad = [&](std::size_t r) {
        if (bad_from < r)
          report(bad_from, r - 1, "plan records unreadable (checksum failure or bad encoding)");
        bad_from = records;
      };
      for (std::size_t r = 0; r < consistent; ++r) {
        const std::uint64_t* row = &index[r * kIndexColumns];
        const auto kind = static_cast<RecordKind>(row[3]);
        if (is_self_contained(kind)) {
          close_bad(r);
          have_plan = false;
        }
        bool ok = good[r] && (have_plan || is_self_contained(kind));
        if (ok)
          ok = decode_record(kind, std::span<const std::uint8_t>(bytes.data() + row[1], row[2]),
                             m.width, m.header.district_count, plan, &m.header.adjacency);
        have_plan = ok;
        if (!ok && bad_from == records) bad_from = r;
      }
      close_bad(consistent);
    } catch (const StoreError& e) {
      report(0, last, std::string("plan_bytes unreadable: ") + e.what());
    }
    try {
      H5Group g = m.group(chain);
      if (H5Lexists(g.get(), "observables", H5P_DEFAULT) > 0) {
        H5Dataset d = m.dataset(g, "observables");
        const auto dims = dims_of(d.get(), m.path);
        if (dims.at(0) != records)
          report(std::min<std::uint64_t>(dims[0], records), last,
                 "observables has " + std::to_string(dims[0]) + " rows for " +
                     std::to_string(records) + " records");
        std::vector<double> rows(kObservableChunkRows * dims.at(1));
        for (hsize_t at = 0; at < dims[0]; at += kObservableChunkRows) {
          const hsize_t n = std::min<hsize_t>(kObservableChunkRows, dims[0] - at);
          try {
            read_rows(d.get(), H5T_NATIVE_DOUBLE, rows.data(), at, n, dims[1], true, m.path,
                      "reading observables");
          } catch (const StoreError&) {
            report(at, at + n - 1, "observables rows unreadable (checksum failure)");
          }
        }
      }
    } catch (const StoreError& e) {
      report(0, last, std::string("observables unreadable: ") + e.what());
    }
  }
  return problems;
}

}  // namespace planmill
