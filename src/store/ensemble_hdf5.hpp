#pragma once
// The ensemble file's layout constants (docs/format.md) and the HDF5 helpers its writer, reader
// and verify share (ensemble_hdf5.cpp). Private to src/store.
#include <cstddef>
#include <cstdint>
#include <span>
#include <string>
#include <vector>

#include "planmill/store/hdf5_handle.hpp"

namespace planmill::ensemble_hdf5 {

inline constexpr std::size_t kIndexColumns = 4;  // step, offset, length, kind
inline constexpr hsize_t kIndexChunkRows = 1024;
inline constexpr hsize_t kObservableChunkRows = 256;
inline constexpr const char* kCounterNames[] = {"steps", "accepted", "rejected", "no_cut",
                                                "invalid"};

inline std::string chain_group_name(std::uint64_t index) {
  return "chain_" + std::to_string(index);
}

template <typename T>
T read_scalar_attribute(hid_t object, const char* name, hid_t mem_type, const std::string& path) {
  const std::string action = std::string("reading attribute ") + name;
  H5Attribute attr = checked<H5Attribute>(H5Aopen(object, name, H5P_DEFAULT), path, action.c_str());
  T value{};
  check(H5Aread(attr.get(), mem_type, &value), path, action.c_str());
  return value;
}

std::string read_string_attribute(hid_t object, const char* name, const std::string& path);

H5Dataset create_stream(hid_t group, const char* name, hid_t type, std::span<const hsize_t> chunk,
                        int deflate, bool shuffle, const std::string& path);

// Appends `rows` rows of `columns` values (row-major) after row `at`.
void append_rows(hid_t dset, hid_t mem_type, const void* data, hsize_t at, hsize_t rows,
                 hsize_t columns, bool two_d, const std::string& path, const char* action);

// Reads rows [first, first + rows) of a 1-D or 2-D dataset.
void read_rows(hid_t dset, hid_t mem_type, void* data, hsize_t first, hsize_t rows, hsize_t columns,
               bool two_d, const std::string& path, const char* action);

std::vector<hsize_t> dims_of(hid_t dset, const std::string& path);

}  // namespace planmill::ensemble_hdf5
