#include "planmill/manifest/manifest.hpp"
#include "planmill/manifest/pool.hpp"

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>

#include "planmill/base/error.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/io/file_hash.hpp"
#include "planmill/version.hpp"

namespace planmill {
namespace {

using json = nlohmann::ordered_json;
namespace fs = std::filesystem;

json text_or_null(const std::string& s) { return s.empty() ? json(nullptr) : json(s); }

// The digest of a file now, or null when it cannot be read.
json sha256_now(const std::string& path) {
  try {
    return sha256_file_hex(path);
  } catch (const InputError&) {
    return nullptr;
  }
}

// "matches", "differs" or "missing": a file hashed at run start against what is there now.
std::string compare(const std::string& recorded, const json& now) {
  if (now.is_null()) return "missing";
  return now.get<std::string>() == recorded ? "matches" : "differs";
}

json counters_json(const StoredCounters& c) {
  return {{"steps", c.steps},
          {"accepted", c.accepted},
          {"rejected", c.rejected},
          {"no_cut", c.no_cut},
          {"invalid", c.invalid}};
}

json problem_json(const ChainProblem& p, const std::string& file) {
  return {{"chain", p.chain_index},
          {"first_record", p.first_record},
          {"last_record", p.last_record == UINT64_MAX ? json(nullptr) : json(p.last_record)},
          {"file", text_or_null(file)},
          {"what", p.what}};
}

// The plan file that holds a problem's first record, from the chain's spans in the state.
std::string file_of(const RunState& state, const ChainProblem& p) {
  for (const auto& c : state.chains) {
    if (c.index != p.chain_index) continue;
    std::uint64_t first = 0;
    for (const auto& s : c.spans) {
      if (p.first_record < first + s.records) return s.file;
      first += s.records;
    }
  }
  return {};
}

// verify() may report a damaged stretch as many neighbouring ranges (one per plan record); adjacent
// ranges of one chain with the same cause become one.
std::vector<ChainProblem> coalesced(std::vector<ChainProblem> problems) {
  std::stable_sort(problems.begin(), problems.end(), [](const auto& a, const auto& b) {
    return a.chain_index != b.chain_index ? a.chain_index < b.chain_index
                                          : a.first_record < b.first_record;
  });
  std::vector<ChainProblem> out;
  for (auto& p : problems) {
    if (!out.empty()) {
      auto& last = out.back();
      if (last.chain_index == p.chain_index && last.rung == p.rung && last.what == p.what &&
          last.last_record != UINT64_MAX && p.first_record <= last.last_record + 1) {
        last.last_record = std::max(last.last_record, p.last_record);
        continue;
      }
    }
    out.push_back(std::move(p));
  }
  return out;
}

}  // namespace

json build_manifest(const RunReader& reader, const std::vector<ChainProblem>& problems,
                    const std::vector<ChainProblem>& rung_problems,
                    const RunDiagnostics& diagnostics, const BlindCheck* blind) {
  const RunState& s = reader.state();
  const RunLayout& layout = reader.layout();
  json m;
  m["manifest_schema"] = kManifestSchemaVersion;
  m["written"] = utc_now_iso8601();
  m["run_id"] = s.run_id;
  m["run_folder"] = layout.root.string();
  m["run_by"] = {{"planmill_version", s.planmill_version}, {"git_commit", s.git_commit}};
  m["merged_by"] = {{"planmill_version", kVersion}, {"git_commit", kGitCommit}};

  const json copy_now = sha256_now(layout.job_copy().string());
  m["job"] = {{"path", s.job_path},
              {"sha256", s.job_sha256},
              {"copy", "job.toml"},
              {"copy_sha256", copy_now},
              {"copy_status", compare(s.job_sha256, copy_now)}};
  json inputs = json::array();
  std::size_t inputs_changed = 0;
  for (const auto& f : s.inputs) {
    // Relative paths from the job file of the run's latest start or resume.
    const std::string resolved = resolve_input_path(s.job_path, f.path);
    const json now = sha256_now(resolved);
    const std::string status = compare(f.sha256, now);
    inputs_changed += status != "matches";
    inputs.push_back({{"role", f.role},
                      {"path", f.path},
                      {"checked", resolved},
                      {"sha256_at_start", f.sha256},
                      {"sha256_now", now},
                      {"status", status}});
  }
  m["inputs"] = inputs;
  json builds = json::array();
  for (const auto& b : s.builds) {
    builds.push_back({{"compiler", b.compiler}, {"cxx_flags", b.cxx_flags}, {"isa", b.isa},
                      {"hdf5", b.hdf5}, {"mpi", b.mpi}});
  }
  m["builds"] = builds;
  m["seed"] = s.seed;
  m["target_steps"] = s.target_steps;
  m["burn_in"] = s.burn_in;
  m["record_every"] = s.record_every;
  m["observables"] = s.observable_names;
  m["sorted"] = s.sorted_names;
  m["measures"] = s.measures_json.empty() ? json(nullptr) : json::parse(s.measures_json);
  m["unit_count"] = reader.unit_count();
  m["district_count"] = reader.district_count();
  m["checkpoints"] = s.checkpoints;
  m["finished"] = s.finished;
  m["stop_reason"] = s.stop_reason;

  json sessions = json::array();
  for (const auto& r : s.sessions) {
    sessions.push_back({{"started", r.started},
                        {"ended", text_or_null(r.ended)},
                        {"ranks", r.ranks},
                        {"hosts", r.hosts},
                        {"how_ended", text_or_null(r.how_ended)}});
  }
  m["sessions"] = sessions;

  // Problems by chain and by file, with the file found from the chain's spans.
  std::map<std::uint64_t, json> chain_problems;
  std::map<std::string, json> file_problems;
  json all_problems = json::array();
  for (const auto& p : coalesced(problems)) {
    const std::string file = file_of(s, p);
    const json j = problem_json(p, file);
    all_problems.push_back(j);
    chain_problems[p.chain_index].push_back(j);
    if (!file.empty()) file_problems[file].push_back(j);
  }
  // Hot-rung damage, kept apart: it leaves the ensemble and its diagnostics alone.
  std::map<std::uint64_t, json> chain_rung_problems;
  std::map<std::string, json> file_rung_problems;
  json all_rung_problems = json::array();
  for (const auto& p : coalesced(rung_problems)) {
    const std::string file = file_of(s, p);
    json j = problem_json(p, file);
    j["rung"] = p.rung;
    all_rung_problems.push_back(j);
    chain_rung_problems[p.chain_index].push_back(j);
    if (!file.empty()) file_rung_problems[file].push_back(j);
  }

  std::map<std::string, json> file_chains;  // file -> the chain record ranges it holds
  json chains = json::array();
  std::uint64_t total_records = 0, total_steps = 0, total_accepted = 0;
  for (const auto& c : s.chains) {
    json files = json::array();
    std::uint64_t first = 0;
    for (const auto& sp : c.spans) {
      files.push_back({{"file", sp.file}, {"first_record", first}, {"records", sp.records}});
      file_chains[sp.file].push_back(
          {{"chain", c.index},
           {"first_record", first},
           {"last_record", sp.records == 0 ? json(nullptr) : json(first + sp.records - 1)},
           {"records", sp.records}});
      first += sp.records;
    }
    const auto& k = c.counters;
    chains.push_back(
        {{"index", c.index},
         {"steps", c.steps},
         {"records", c.records},
         {"counters", counters_json(k)},
         {"acceptance_rate",
          k.steps == 0 ? json(nullptr)
                       : json(static_cast<double>(k.accepted) / static_cast<double>(k.steps))},
         {"last_checkpoint", text_or_null(c.last_checkpoint)},
         {"files", files},
         {"problems", chain_problems.count(c.index) ? chain_problems[c.index] : json::array()}});
    // With tempering: the frozen ladder and its swap statistics (temper/ladder_summary.hpp).
    if (!c.ladder.empty()) chains.back()["ladder"] = json::parse(c.ladder);
    // In a pool: the chain's index in its own run (pool.json says which piece).
    if (c.stored_as) chains.back()["index_in_piece"] = *c.stored_as;
    // With [tempering] record = "all": how many rungs were recorded, and damage to rungs 1..R-1.
    if (c.recorded_rungs > 1 || chain_rung_problems.count(c.index)) {
      chains.back()["recorded_rungs"] = c.recorded_rungs;
      chains.back()["rung_problems"] =
          chain_rung_problems.count(c.index) ? chain_rung_problems[c.index] : json::array();
    }
    total_records += c.records;
    total_steps += c.steps;
    total_accepted += k.accepted;
  }
  m["chains"] = chains;

  json plan_files = json::array();
  std::uint64_t total_bytes = 0;
  for (const auto& f : s.files) {
    const std::string path = layout.resolve(f.file).string();
    std::error_code ec;
    const auto size = fs::file_size(path, ec);
    if (!ec) total_bytes += size;
    const bool damaged = file_problems.count(f.file) != 0 || file_rung_problems.count(f.file) != 0;
    plan_files.push_back(
        {{"file", f.file},
         {"segment", f.segment},
         {"rank", f.rank},
         {"host", f.host},
         {"size_bytes", ec ? json(nullptr) : json(static_cast<std::uint64_t>(size))},
         {"sha256", sha256_now(path)},
         {"committed_sha256", text_or_null(f.sha256)},
         {"identity", reader.identity_of(f.file)},
         {"verify", damaged ? "damaged" : "ok"},
         {"chains", file_chains.count(f.file) ? file_chains[f.file] : json::array()},
         {"problems", file_problems.count(f.file) ? file_problems[f.file] : json::array()},
         {"rung_problems",
          file_rung_problems.count(f.file) ? file_rung_problems[f.file] : json::array()}});
  }
  m["plan_files"] = plan_files;
  m["problems"] = all_problems;
  m["rung_problems"] = all_rung_problems;
  m["totals"] = {{"chains", s.chains.size()},
                 {"records", total_records},
                 {"steps", total_steps},
                 {"accepted", total_accepted},
                 {"plan_files", s.files.size()},
                 {"plan_bytes", total_bytes},
                 {"problems", all_problems.size()},
                 {"rung_problems", all_rung_problems.size()},
                 {"inputs_not_matching", inputs_changed}};
  m["diagnostics"] = diagnostics_to_json(diagnostics);
  if (blind) {
    m["blind_check"] = blind_check_json(*blind);
  } else {
    BlindCheck none;
    none.result = "not checked";
    none.why = "this manifest was written by planmill diagnose, which draws no plans; planmill merge checks";
    m["blind_check"] = blind_check_json(none);
  }
  // A pool of runs: its pieces, their checksums and what was dropped (docs/manifest.md, "Pools").
  if (s.pooled) m["pool"] = read_pool_record(layout.root.string());
  return m;
}

void write_manifest(const RunLayout& layout, const json& manifest) {
  write_file_atomically(layout.manifest().string(), manifest.dump(2) + "\n");
}

bool write_manifest_diagnostics(const RunReader& reader, const std::vector<ChainProblem>& problems,
                                const RunDiagnostics& diagnostics) {
  const RunLayout& layout = reader.layout();
  json manifest;
  if (std::ifstream in(layout.manifest(), std::ios::binary); in) {
    std::ostringstream text;
    text << in.rdbuf();
    manifest = json::parse(text.str(), nullptr, /*allow_exceptions=*/false);
  }
  const bool fresh = !manifest.is_object() || !manifest.contains("manifest_schema") ||
                     manifest["manifest_schema"] != kManifestSchemaVersion;
  if (fresh) {
    manifest = build_manifest(reader, problems, reader.verify_rungs(), diagnostics);
  } else {
    manifest["diagnostics"] = diagnostics_to_json(diagnostics);
  }
  write_manifest(layout, manifest);
  return fresh;
}

}  // namespace planmill
