// EnsembleReader: an ensemble file opened read-only (serial driver); plans decoded from the
// nearest self-contained record. Layout: docs/format.md.
#include <algorithm>
#include <span>
#include <stdexcept>

#include "planmill/store/ensemble.hpp"
#include "store/ensemble_hdf5.hpp"
#include "store/ensemble_reader_impl.hpp"

namespace planmill {

using namespace ensemble_hdf5;

namespace {

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

H5Group EnsembleReader::Impl::group(std::uint64_t chain) const {
  const std::string name = chain_group_name(chain);
  return checked<H5Group>(H5Gopen2(file.get(), name.c_str(), H5P_DEFAULT), path,
                          ("opening group " + name).c_str());
}

H5Dataset EnsembleReader::Impl::dataset(const H5Group& g, const char* name) const {
  return checked<H5Dataset>(H5Dopen2(g.get(), name, H5P_DEFAULT), path,
                            (std::string("opening ") + name).c_str());
}

std::vector<std::uint64_t> EnsembleReader::Impl::read_index_uncached(std::uint64_t chain) const {
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

const std::vector<std::uint64_t>& EnsembleReader::Impl::index(std::uint64_t chain) const {
  auto it = index_cache.find(chain);
  if (it == index_cache.end()) it = index_cache.emplace(chain, read_index_uncached(chain)).first;
  return it->second;
}

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

namespace {

std::vector<std::string> read_names(hid_t object, const std::string& path, const char* action) {
  H5Attribute attr = checked<H5Attribute>(H5Aopen(object, "names", H5P_DEFAULT), path, action);
  H5Dataspace space = checked<H5Dataspace>(H5Aget_space(attr.get()), path, action);
  const hssize_t n = H5Sget_simple_extent_npoints(space.get());
  if (n < 0) throw StoreError(path, action, hdf5_error_stack());
  H5Type t = utf8_string_type(path);
  std::vector<char*> p(static_cast<std::size_t>(n), nullptr);
  check(H5Aread(attr.get(), t.get(), p.data()), path, action);
  std::vector<std::string> names;
  for (char* s : p) names.emplace_back(s ? s : "");
  (void)H5Dvlen_reclaim(t.get(), space.get(), H5P_DEFAULT, p.data());
  return names;
}

}  // namespace

std::vector<std::string> EnsembleReader::observable_names(std::uint64_t chain) const {
  const Impl& m = *impl_;
  H5Group g = m.group(chain);
  if (H5Lexists(g.get(), "observables", H5P_DEFAULT) <= 0) return {};
  H5Dataset d = m.dataset(g, "observables");
  return read_names(d.get(), m.path, "reading observable names");
}

std::vector<std::string> EnsembleReader::sorted_names(std::uint64_t chain) const {
  const Impl& m = *impl_;
  H5Group g = m.group(chain);
  if (H5Lexists(g.get(), "sorted", H5P_DEFAULT) <= 0) return {};
  H5Group sorted = checked<H5Group>(H5Gopen2(g.get(), "sorted", H5P_DEFAULT), m.path, "opening group sorted");
  return read_names(sorted.get(), m.path, "reading sorted vector names");
}

std::vector<double> EnsembleReader::read_sorted(std::uint64_t chain, const std::string& name) const {
  const Impl& m = *impl_;
  const auto names = sorted_names(chain);
  if (std::find(names.begin(), names.end(), name) == names.end())
    throw std::out_of_range(m.path + ": " + chain_group_name(chain) + " has no sorted vector " + name);
  H5Group g = m.group(chain);
  H5Group sorted = checked<H5Group>(H5Gopen2(g.get(), "sorted", H5P_DEFAULT), m.path, "opening group sorted");
  H5Dataset d = m.dataset(sorted, name.c_str());
  const auto dims = dims_of(d.get(), m.path);
  if (dims.size() != 2) throw StoreError(m.path, "reading sorted/" + name, "not a records x k table");
  std::vector<double> values(dims[0] * dims[1]);
  read_rows(d.get(), H5T_NATIVE_DOUBLE, values.data(), 0, dims[0], dims[1], true, m.path,
            "reading a sorted vector");
  return values;
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

}  // namespace planmill
