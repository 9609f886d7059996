#pragma once
// EnsembleReader's open file and cached indexes, shared by the reader (ensemble_reader.cpp) and
// verify (ensemble_verify.cpp). Private to src/store.
#include <cstddef>
#include <cstdint>
#include <map>
#include <string>
#include <vector>

#include "planmill/store/ensemble.hpp"
#include "planmill/store/hdf5_handle.hpp"

namespace planmill {

struct EnsembleReader::Impl {
  std::string path;
  H5File file;
  EnsembleHeader header;
  std::int64_t version = 0;
  std::size_t width = 1;
  std::vector<std::uint64_t> chain_indices;
  mutable std::map<std::uint64_t, std::vector<std::uint64_t>> index_cache;

  H5Group group(std::uint64_t chain) const;
  H5Dataset dataset(const H5Group& g, const char* name) const;
  std::vector<std::uint64_t> read_index_uncached(std::uint64_t chain) const;
  const std::vector<std::uint64_t>& index(std::uint64_t chain) const;
};

}  // namespace planmill
