// The HDF5 helpers of the ensemble file (store/ensemble_hdf5.hpp): attributes read back,
// chunked datasets and row ranges, each failing call a StoreError naming the file and the action.
#include "store/ensemble_hdf5.hpp"

namespace planmill::ensemble_hdf5 {

std::string read_string_attribute(hid_t object, const char* name, const std::string& path) {
  const std::string action = std::string("reading attribute ") + name;
  H5Attribute attr = checked<H5Attribute>(H5Aopen(object, name, H5P_DEFAULT), path, action.c_str());
  H5Type t = utf8_string_type(path);
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

namespace {

// The file's rows [first, first + rows) selected, and a memory space of that shape.
struct RowSelection {
  H5Dataspace file, memory;
};

RowSelection select_rows(hid_t dset, hsize_t first, hsize_t rows, hsize_t columns, bool two_d,
                         const std::string& path, const char* action) {
  RowSelection s{checked<H5Dataspace>(H5Dget_space(dset), path, action), {}};
  const hsize_t start[2] = {first, 0}, count[2] = {rows, columns};
  check(H5Sselect_hyperslab(s.file.get(), H5S_SELECT_SET, start, nullptr, count, nullptr), path,
        action);
  s.memory = checked<H5Dataspace>(H5Screate_simple(two_d ? 2 : 1, count, nullptr), path, action);
  return s;
}

}  // namespace

void append_rows(hid_t dset, hid_t mem_type, const void* data, hsize_t at, hsize_t rows,
                 hsize_t columns, bool two_d, const std::string& path, const char* action) {
  if (rows == 0) return;
  const hsize_t new_dims[2] = {at + rows, columns};
  check(H5Dset_extent(dset, new_dims), path, action);
  const RowSelection s = select_rows(dset, at, rows, columns, two_d, path, action);
  check(H5Dwrite(dset, mem_type, s.memory.get(), s.file.get(), H5P_DEFAULT, data), path, action);
}

void read_rows(hid_t dset, hid_t mem_type, void* data, hsize_t first, hsize_t rows, hsize_t columns,
               bool two_d, const std::string& path, const char* action) {
  if (rows == 0) return;
  const RowSelection s = select_rows(dset, first, rows, columns, two_d, path, action);
  check(H5Dread(dset, mem_type, s.memory.get(), s.file.get(), H5P_DEFAULT, data), path, action);
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

}  // namespace planmill::ensemble_hdf5
