// EnsembleReader::verify: every chain of the file checked for checksums, index consistency and
// decodability, the damage reported as ranges of records.
#include <algorithm>
#include <utility>

#include "planmill/store/ensemble.hpp"
#include "store/ensemble_hdf5.hpp"
#include "store/ensemble_reader_impl.hpp"

namespace planmill {

using namespace ensemble_hdf5;

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
    // A per-record table (observables, a sorted vector): one row per record, every chunk readable.
    auto check_table = [&](hid_t table, const std::string& name) {
      const auto dims = dims_of(table, m.path);
      if (dims.at(0) != records)
        report(std::min<std::uint64_t>(dims[0], records), last,
               name + " has " + std::to_string(dims[0]) + " rows for " + std::to_string(records) +
                   " records");
      const hsize_t columns = dims.size() > 1 ? dims[1] : 1;
      std::vector<double> rows(kObservableChunkRows * columns);
      for (hsize_t at = 0; at < dims[0]; at += kObservableChunkRows) {
        const hsize_t n = std::min<hsize_t>(kObservableChunkRows, dims[0] - at);
        try {
          read_rows(table, H5T_NATIVE_DOUBLE, rows.data(), at, n, columns, dims.size() > 1, m.path,
                    ("reading " + name).c_str());
        } catch (const StoreError&) {
          report(at, at + n - 1, name + " rows unreadable (checksum failure)");
        }
      }
    };
    try {
      H5Group g = m.group(chain);
      if (H5Lexists(g.get(), "observables", H5P_DEFAULT) > 0)
        check_table(m.dataset(g, "observables").get(), "observables");
    } catch (const StoreError& e) {
      report(0, last, std::string("observables unreadable: ") + e.what());
    }
    try {
      H5Group g = m.group(chain);
      if (H5Lexists(g.get(), "sorted", H5P_DEFAULT) > 0) {
        H5Group sorted = checked<H5Group>(H5Gopen2(g.get(), "sorted", H5P_DEFAULT), m.path,
                                          "opening group sorted");
        for (const std::string& name : sorted_names(chain))
          check_table(m.dataset(sorted, name.c_str()).get(), "sorted/" + name);
      }
    } catch (const StoreError& e) {
      report(0, last, std::string("sorted vectors unreadable: ") + e.what());
    }
  }
  return problems;
}

}  // namespace planmill
