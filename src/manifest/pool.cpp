// Pools of runs (planmill/manifest/pool.hpp): the checks that make several runs one ensemble,
// pool.json, and the pooled run state that names the pieces' own plan files.
#include "planmill/manifest/pool.hpp"

#include <toml++/toml.h>

#include <filesystem>
#include <fstream>
#include <map>
#include <set>
#include <sstream>

#include "planmill/base/error.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/io/file_hash.hpp"
#include "planmill/run/run_reader.hpp"
#include "planmill/version.hpp"
#include "planmill/io/number_text.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;
using json = nlohmann::ordered_json;

constexpr const char* kPoolFile = "pool.json";
constexpr const char* kSameJob =
    "pieces of one pool run the same job on the same map; only [sampler] seed and [output] may "
    "differ (drop the piece with --drop PIECE --reason TEXT, or pool it elsewhere)";

std::string read_text(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError({path.string(), 0, ""}, "cannot be read", "check that the file is there");
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

// key path -> value as TOML text, for every value of the job but the ones pieces may differ in.
void flatten(const toml::node& node, const std::string& path, std::map<std::string, std::string>& out) {
  if (path == "sampler.seed" || path == "output" || path.rfind("output.", 0) == 0) return;
  if (const auto* table = node.as_table()) {
    for (const auto& [key, value] : *table)
      flatten(value, path.empty() ? std::string(key.str()) : path + "." + std::string(key.str()), out);
  } else if (const auto* array = node.as_array()) {
    for (std::size_t i = 0; i < array->size(); ++i)
      flatten(*array->get(i), path + "[" + std::to_string(i) + "]", out);
    if (array->empty()) out[path] = "[]";
  } else {
    // Floats as their shortest round-trip text, so two values that differ never print alike.
    if (const auto* x = node.as_floating_point()) {
      out[path] = number_text(x->get());
      return;
    }
    std::ostringstream text;
    node.visit([&](const auto& v) { text << v; });
    out[path] = text.str();
  }
}

std::map<std::string, std::string> job_keys(const fs::path& piece) {
  const fs::path file = piece / "job.toml";
  const std::string text = read_text(file);
  try {
    std::map<std::string, std::string> keys;
    flatten(toml::parse(text, file.string()), "", keys);
    return keys;
  } catch (const toml::parse_error& e) {
    throw InputError({file.string(), static_cast<std::size_t>(e.source().begin.line), ""},
                     "is not valid TOML: " + std::string(e.description()),
                     "restore the run's job copy");
  }
}

struct Piece {
  std::string given;
  fs::path dir;  // absolute
  RunState state;
  std::string state_sha256;
  std::map<std::string, std::string> job;
};

Piece load_piece(const std::string& given) {
  Piece p;
  p.given = given;
  p.dir = fs::absolute(given).lexically_normal();
  if (!fs::is_directory(p.dir))
    throw InputError({given, 0, ""}, "is not a folder", "give the run folders to pool");
  const RunLayout layout{p.dir};
  p.state = read_run_state(layout);
  p.state_sha256 = sha256_file_hex(layout.state_file().string());
  if (p.state.pooled)
    throw InputError({layout.state_file().string(), 0, ""}, "is a pool already",
                     "pool the run folders it was made of");
  return p;
}

void check_piece(const Piece& p) {
  const RunLayout layout{p.dir};
  if (!p.state.finished) {
    throw InputError({layout.state_file().string(), 0, "finished"},
                     "the run is unfinished (" + (p.state.stop_reason.empty() ? std::string("killed or running")
                                                                               : p.state.stop_reason) + ")",
                     "finish it with planmill run --resume, or leave it out with --drop " + p.given +
                         " --reason TEXT");
  }
  const RunReader reader(p.dir.string());
  const auto problems = reader.verify();
  if (!problems.empty()) {
    throw InputError({p.given, 0, ""},
                     "has damaged records (chain " + std::to_string(problems.front().chain_index) +
                         ": " + problems.front().what + ")",
                     "see planmill merge " + p.given + ", or leave it out with --drop " + p.given +
                         " --reason TEXT");
  }
}

// The first difference between the piece and the pool's first piece, as the reason to refuse.
void check_same(const Piece& first, const Piece& p) {
  for (const auto& [key, value] : first.job) {
    const auto it = p.job.find(key);
    if (it == p.job.end() || it->second != value) {
      const std::string here = it == p.job.end() ? "absent" : it->second;
      throw InputError({(p.dir / "job.toml").string(), 0, key},
                       "is " + here + " here and " + value + " in " + first.given + "'s job", kSameJob);
    }
  }
  for (const auto& [key, value] : p.job) {
    if (first.job.count(key) == 0)
      throw InputError({(p.dir / "job.toml").string(), 0, key},
                       "is " + value + " here and absent in " + first.given + "'s job", kSameJob);
  }
  for (const auto& a : first.state.inputs) {
    if (a.role == "job") continue;
    bool same = false;
    for (const auto& b : p.state.inputs) same = same || (b.role == a.role && b.sha256 == a.sha256);
    if (!same) {
      throw InputError({(p.dir / "run-state.json").string(), 0, "inputs"},
                       "the map's " + a.role + " file (" + a.path + ") differs from " + first.given +
                           "'s (SHA-256)",
                       kSameJob);
    }
  }
}

// Another build may draw other plans from the same seed (run/build_info.hpp), so that a piece could
// not be drawn again as it was: refuse it, naming the first difference, unless the user says so.
void check_same_build(const Piece& first, const Piece& p) {
  if (first.state.builds.empty()) return;
  for (const BuildInfo& b : p.state.builds) {
    const std::vector<std::string> d = build_differences(first.state.builds.front(), b);
    if (!d.empty())
      throw InputError({(p.dir / "run-state.json").string(), 0, "builds"},
                       "was drawn by another build than " + first.given + ": " + d.front() +
                           " (\"here\" is this piece, \"in the run\" the first piece)",
                       "pool pieces drawn by one build, or give --allow-other-builds to pool them anyway "
                       "(pool.json then records mixed_builds = true)");
  }
}

std::string relative_to(const fs::path& file, const fs::path& base) {
  return file.lexically_normal().lexically_relative(base).generic_string();
}

}  // namespace

PoolSummary make_pool(const PoolRequest& request) {
  const fs::path root = fs::absolute(request.pool_dir).lexically_normal();
  if (fs::exists(root) && (!fs::is_directory(root) || !fs::is_empty(root)))
    throw InputError({request.pool_dir, 0, ""}, "exists and is not an empty folder",
                     "give a new folder for the pool");
  if (request.pieces.empty())
    throw InputError({request.pool_dir, 0, ""}, "no pieces given", "name the run folders to pool");

  std::map<std::string, std::string> reasons;  // absolute piece folder -> why it is dropped
  for (const auto& d : request.drops) {
    const std::string dir = fs::absolute(d.piece).lexically_normal().string();
    bool named = false;
    for (const auto& p : request.pieces) named = named || fs::absolute(p).lexically_normal().string() == dir;
    if (!named)
      throw InputError({d.piece, 0, "--drop"}, "is not one of the pieces given",
                       "name every piece, the dropped ones too, so that the pool records them");
    if (d.reason.empty())
      throw InputError({d.piece, 0, "--reason"}, "is dropped without a reason",
                       "say why with --reason TEXT");
    reasons[dir] = d.reason;
  }

  std::vector<Piece> kept;
  json dropped = json::array();
  std::set<std::string> seen;
  for (const auto& given : request.pieces) {
    const std::string dir = fs::absolute(given).lexically_normal().string();
    if (!seen.insert(dir).second)
      throw InputError({given, 0, ""}, "is given twice", "name each piece once");
    if (const auto r = reasons.find(dir); r != reasons.end()) {
      json entry = {{"path", relative_to(dir, root)}, {"given", given}, {"reason", r->second}};
      const fs::path state = fs::path(dir) / "run-state.json";
      entry["run_state_sha256"] = fs::exists(state) ? json(sha256_file_hex(state.string())) : json(nullptr);
      try {
        const RunState s = read_run_state(RunLayout{dir});
        entry["run_id"] = s.run_id;
        entry["seed"] = s.seed;
      } catch (const InputError&) {
        entry["run_id"] = nullptr;  // a piece may be dropped because it cannot be read
        entry["seed"] = nullptr;
      }
      dropped.push_back(std::move(entry));
      continue;
    }
    Piece p = load_piece(given);
    check_piece(p);
    p.job = job_keys(p.dir);
    if (!kept.empty()) check_same(kept.front(), p);
    if (!kept.empty() && !request.allow_other_builds) check_same_build(kept.front(), p);
    for (const auto& other : kept) {
      if (other.state.seed == p.state.seed)
        throw InputError({(p.dir / "job.toml").string(), 0, "sampler.seed"},
                         "is " + std::to_string(p.state.seed) + ", as in " + other.given +
                             ": the two would draw the same plans",
                         "give each piece its own seed");
    }
    kept.push_back(std::move(p));
  }
  if (kept.empty())
    throw InputError({request.pool_dir, 0, ""}, "every piece is dropped", "keep at least one");

  // The pooled state: the first piece's job and settings, every piece's chains, files, sessions.
  RunState pooled = kept.front().state;
  pooled.pooled = true;
  pooled.chains.clear();
  pooled.files.clear();
  pooled.sessions.clear();
  pooled.checkpoints = 0;
  pooled.stop_reason = "pooled from " + std::to_string(kept.size()) + " runs (pool.json)";
  std::string ids;
  json pieces = json::array();
  PoolSummary summary{kept.size(), dropped.size(), 0, 0};
  for (const auto& p : kept) {
    ids += p.state.run_id + "\n";
    json chains = json::array();
    for (auto c : p.state.chains) {
      const std::uint64_t own = c.index_in_files();
      chains.push_back({{"chain", pooled.chains.size()}, {"index_in_piece", c.index}, {"records", c.records}});
      c.stored_as = own;
      c.index = pooled.chains.size();
      for (auto& sp : c.spans) sp.file = relative_to(p.dir / sp.file, root);
      summary.records += c.records;
      pooled.chains.push_back(std::move(c));
    }
    json files = json::array();
    for (auto f : p.state.files) {
      files.push_back({{"file", f.file}, {"committed_sha256", f.sha256}});
      f.file = relative_to(p.dir / f.file, root);
      pooled.files.push_back(std::move(f));
    }
    for (const auto& b : p.state.builds) {
      bool known = false;
      for (const auto& k : pooled.builds) known = known || build_differences(k, b).empty();
      if (!known) pooled.builds.push_back(b);
    }
    pooled.sessions.insert(pooled.sessions.end(), p.state.sessions.begin(), p.state.sessions.end());
    pooled.checkpoints += p.state.checkpoints;
    pieces.push_back({{"path", relative_to(p.dir, root)},
                      {"given", p.given},
                      {"run_id", p.state.run_id},
                      {"seed", p.state.seed},
                      {"job_sha256", p.state.job_sha256},
                      {"run_state_sha256", p.state_sha256},
                      {"chains", chains},
                      {"plan_files", files}});
  }
  summary.chains = pooled.chains.size();
  pooled.run_id = "pool-" + sha256_hex(ids).substr(0, 16);

  json record = {{"pool_schema", 1},
                 {"written", utc_now_iso8601()},
                 {"pooled_by", {{"planmill_version", kVersion}, {"git_commit", kGitCommit}}},
                 {"run_id", pooled.run_id},
                 {"job_from", relative_to(kept.front().dir, root)},
                 {"pieces", pieces},
                 {"dropped", dropped},
                 {"mixed_builds", pooled.builds.size() > 1}};
  fs::create_directories(root);
  const RunLayout layout{root};
  write_file_atomically(layout.job_copy().string(), read_text(kept.front().dir / "job.toml"));
  write_file_atomically((root / kPoolFile).string(), record.dump(2) + "\n");
  write_run_state(layout, pooled);  // last: a folder without it holds no pool
  return summary;
}

json read_pool_record(const std::string& pool_dir) {
  const fs::path file = fs::path(pool_dir) / kPoolFile;
  json record;
  try {
    record = json::parse(read_text(file));
  } catch (const json::exception& e) {
    throw InputError({file.string(), 0, ""}, std::string("is not valid JSON: ") + e.what(),
                     "make the pool again with planmill pool");
  }
  for (auto& piece : record["pieces"]) {
    const fs::path state = fs::path(pool_dir) / piece["path"].get<std::string>() / "run-state.json";
    std::string now = "missing";
    if (fs::exists(state))
      now = sha256_file_hex(state.string()) == piece["run_state_sha256"].get<std::string>() ? "matches" : "differs";
    piece["run_state_now"] = now;
  }
  return record;
}

}  // namespace planmill
