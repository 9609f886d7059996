#pragma once
// A pool of runs (`planmill pool`, docs/manifest.md "Pools"): several run folders of one job on one
// map with distinct seeds (an array job's pieces) become one folder that reads as one run, so
// diagnose, compare, report, export and merge treat the pieces' chains as one ensemble. Chains are
// numbered anew, piece after piece; each keeps its piece, its index there and its seed (pool.json).
// The pool copies no plans: its run-state.json names the pieces' plan files (relative paths)
// with the SHA-256 each piece committed. A piece is left out only by an explicit drop with a
// reason, which pool.json records beside the pieces and their checksums.
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

namespace planmill {

struct PoolDrop {
  std::string piece;   // one of PoolRequest::pieces, as given
  std::string reason;  // not empty
};

struct PoolRequest {
  std::string pool_dir;             // new, or an empty folder
  std::vector<std::string> pieces;  // every piece, run folders, in pool order
  std::vector<PoolDrop> drops;
  // Pieces drawn by builds that differ (compiler, flags, instruction set, HDF5, MPI) are refused
  // unless this is set; pool.json then records mixed_builds = true.
  bool allow_other_builds = false;
};

struct PoolSummary {
  std::size_t pieces = 0, dropped = 0, chains = 0;
  std::uint64_t records = 0;
};

// Throws InputError, writing nothing, when a piece is no finished run, its plan files fail their
// checks, its job (but for [sampler] seed and [output]) or map (inputs by SHA-256) differs from the
// first kept piece's (naming the key or the file), two pieces share a seed, a drop names no piece
// or gives no reason, or pool_dir holds anything. Writes pool_dir/{job.toml, pool.json,
// run-state.json}, the state last, each atomically.
PoolSummary make_pool(const PoolRequest& request);

// pool.json of a pool folder, each piece with `run_state_now`: whether its run-state.json still
// has the SHA-256 it had when pooled ("matches", "differs", "missing"). Throws InputError if
// pool.json cannot be read.
[[nodiscard]] nlohmann::ordered_json read_pool_record(const std::string& pool_dir);

}  // namespace planmill
