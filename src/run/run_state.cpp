#include "planmill/run/run_state.hpp"

#include <chrono>
#include <cstdio>
#include <ctime>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>

#include "planmill/base/error.hpp"
#include "planmill/io/atomic_file.hpp"

namespace planmill {
namespace {

using nlohmann::json;

json counters_json(const StoredCounters& c) {
  return {{"steps", c.steps},     {"accepted", c.accepted}, {"rejected", c.rejected},
          {"no_cut", c.no_cut},   {"invalid", c.invalid}};
}

StoredCounters counters_from(const json& j) {
  StoredCounters c;
  c.steps = j.at("steps").get<std::uint64_t>();
  c.accepted = j.at("accepted").get<std::uint64_t>();
  c.rejected = j.at("rejected").get<std::uint64_t>();
  c.no_cut = j.at("no_cut").get<std::uint64_t>();
  c.invalid = j.at("invalid").get<std::uint64_t>();
  return c;
}

json to_json(const RunState& s) {
  json j;
  j["format_version"] = s.format_version;
  j["run_id"] = s.run_id;
  j["planmill_version"] = s.planmill_version;
  j["git_commit"] = s.git_commit;
  j["job_path"] = s.job_path;
  j["job_sha256"] = s.job_sha256;
  j["inputs"] = json::array();
  for (const auto& f : s.inputs) {
    j["inputs"].push_back({{"role", f.role}, {"path", f.path}, {"sha256", f.sha256}});
  }
  if (!s.builds.empty()) {
    j["builds"] = json::array();
    for (const auto& b : s.builds) {
      j["builds"].push_back({{"compiler", b.compiler}, {"cxx_flags", b.cxx_flags}, {"isa", b.isa},
                             {"hdf5", b.hdf5}, {"mpi", b.mpi}});
    }
  }
  j["seed"] = s.seed;
  j["target_steps"] = s.target_steps;
  j["burn_in"] = s.burn_in;
  j["record_every"] = s.record_every;
  j["observables"] = s.observable_names;
  if (!s.sorted_names.empty()) j["sorted"] = s.sorted_names;
  if (!s.measures_json.empty()) j["measures"] = json::parse(s.measures_json);
  j["checkpoints"] = s.checkpoints;
  j["finished"] = s.finished;
  j["stop_reason"] = s.stop_reason;
  j["sessions"] = json::array();
  for (const auto& r : s.sessions) {
    j["sessions"].push_back({{"started", r.started}, {"ended", r.ended}, {"ranks", r.ranks},
                             {"hosts", r.hosts}, {"how_ended", r.how_ended}});
  }
  j["files"] = json::array();
  for (const auto& f : s.files) {
    json entry = {{"file", f.file}, {"segment", f.segment}, {"rank", f.rank}, {"host", f.host}};
    if (!f.sha256.empty()) entry["sha256"] = f.sha256;
    j["files"].push_back(std::move(entry));
  }
  if (s.pooled) j["pooled"] = true;
  j["chains"] = json::array();
  for (const auto& c : s.chains) {
    json spans = json::array();
    for (const auto& sp : c.spans) spans.push_back({{"file", sp.file}, {"records", sp.records}});
    json entry = {{"index", c.index},
                           {"steps", c.steps},
                           {"records", c.records},
                           {"counters", counters_json(c.counters)},
                           {"last_checkpoint", c.last_checkpoint},
                           {"spans", spans},
                           {"snapshot", c.snapshot}};
    if (!c.ladder.empty()) entry["ladder"] = json::parse(c.ladder);
    if (c.recorded_rungs != 1) entry["recorded_rungs"] = c.recorded_rungs;
    if (c.stored_as) entry["stored_as"] = *c.stored_as;
    j["chains"].push_back(std::move(entry));
  }
  return j;
}

RunState from_json(const json& j) {
  RunState s;
  s.format_version = j.at("format_version").get<std::int64_t>();
  if (s.format_version != kRunStateFormatVersion) {
    throw std::invalid_argument("format_version " + std::to_string(s.format_version) +
                                " is not the one this planmill reads (" +
                                std::to_string(kRunStateFormatVersion) + ")");
  }
  s.run_id = j.at("run_id").get<std::string>();
  s.planmill_version = j.at("planmill_version").get<std::string>();
  s.git_commit = j.at("git_commit").get<std::string>();
  s.job_path = j.at("job_path").get<std::string>();
  s.job_sha256 = j.at("job_sha256").get<std::string>();
  for (const auto& f : j.at("inputs")) {
    s.inputs.push_back({f.at("role").get<std::string>(), f.at("path").get<std::string>(),
                        f.at("sha256").get<std::string>()});
  }
  if (j.contains("builds")) {
    for (const auto& b : j.at("builds")) {
      s.builds.push_back({b.at("compiler").get<std::string>(), b.at("cxx_flags").get<std::string>(),
                          b.at("isa").get<std::string>(), b.at("hdf5").get<std::string>(),
                          b.at("mpi").get<std::string>()});
    }
  }
  s.seed = j.at("seed").get<std::uint64_t>();
  s.target_steps = j.at("target_steps").get<std::uint64_t>();
  s.burn_in = j.at("burn_in").get<std::uint64_t>();
  s.record_every = j.at("record_every").get<std::uint64_t>();
  s.observable_names = j.at("observables").get<std::vector<std::string>>();
  if (j.contains("sorted")) s.sorted_names = j.at("sorted").get<std::vector<std::string>>();
  if (j.contains("measures")) s.measures_json = j.at("measures").dump();
  s.checkpoints = j.at("checkpoints").get<std::uint64_t>();
  s.finished = j.at("finished").get<bool>();
  s.stop_reason = j.at("stop_reason").get<std::string>();
  for (const auto& r : j.at("sessions")) {
    s.sessions.push_back({r.at("started").get<std::string>(), r.at("ended").get<std::string>(),
                          r.at("ranks").get<int>(), r.at("hosts").get<std::vector<std::string>>(),
                          r.at("how_ended").get<std::string>()});
  }
  for (const auto& f : j.at("files")) {
    s.files.push_back({f.at("file").get<std::string>(), f.at("segment").get<std::uint64_t>(),
                       f.at("rank").get<int>(), f.at("host").get<std::string>(),
                       f.contains("sha256") ? f.at("sha256").get<std::string>() : std::string()});
  }
  s.pooled = j.contains("pooled") && j.at("pooled").get<bool>();
  for (const auto& c : j.at("chains")) {
    ChainEntry e;
    e.index = c.at("index").get<std::uint64_t>();
    e.steps = c.at("steps").get<std::uint64_t>();
    e.records = c.at("records").get<std::uint64_t>();
    e.counters = counters_from(c.at("counters"));
    e.last_checkpoint = c.at("last_checkpoint").get<std::string>();
    e.snapshot = c.at("snapshot").get<std::string>();
    if (c.contains("ladder")) e.ladder = c.at("ladder").dump();
    if (c.contains("stored_as")) e.stored_as = c.at("stored_as").get<std::uint64_t>();
    if (c.contains("recorded_rungs")) e.recorded_rungs = c.at("recorded_rungs").get<std::uint64_t>();
    if (e.recorded_rungs < 1 || e.recorded_rungs > kMaxRungs) {
      throw std::invalid_argument("chain " + std::to_string(e.index) + " has recorded_rungs " +
                                  std::to_string(e.recorded_rungs) + ", not 1 to 64");
    }
    std::uint64_t total = 0;
    for (const auto& sp : c.at("spans")) {
      e.spans.push_back({sp.at("file").get<std::string>(), sp.at("records").get<std::uint64_t>()});
      total += e.spans.back().records;
    }
    if (total != e.records) {
      throw std::invalid_argument("chain " + std::to_string(e.index) + " lists " +
                                  std::to_string(total) + " records in its files but claims " +
                                  std::to_string(e.records));
    }
    s.chains.push_back(std::move(e));
  }
  return s;
}

}  // namespace

std::string input_path_for_state(const std::string& job_file, const std::string& path) {
  namespace fs = std::filesystem;
  const fs::path file = fs::absolute(path).lexically_normal();
  const fs::path base = fs::absolute(job_file).lexically_normal().parent_path();
  const fs::path relative = file.lexically_relative(base);
  return relative.empty() ? file.string() : relative.string();
}

std::string resolve_input_path(const std::string& job_file, const std::string& stored) {
  namespace fs = std::filesystem;
  const fs::path p(stored);
  if (p.is_absolute()) return p.string();
  return (fs::path(job_file).parent_path() / p).lexically_normal().string();
}

std::string RunLayout::plan_file_name(std::uint64_t segment, int rank) {
  char name[64];
  std::snprintf(name, sizeof name, "plans/seg-%05llu-rank-%03d.h5",
                static_cast<unsigned long long>(segment), rank);
  return name;
}

RunState read_run_state(const RunLayout& layout) {
  const std::string path = layout.state_file().string();
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    throw InputError({path, 0, ""}, "is missing, so this is not a run folder (or the run never "
                     "reached its first checkpoint)", "give the folder that `planmill run` wrote");
  }
  std::stringstream text;
  text << in.rdbuf();
  try {
    return from_json(json::parse(text.str()));
  } catch (const json::exception& e) {
    throw InputError({path, 0, ""}, std::string("is not a valid run state: ") + e.what(),
                     "restore it from a backup; planmill replaces it only atomically");
  } catch (const std::invalid_argument& e) {
    throw InputError({path, 0, ""}, e.what(), "use the planmill version that wrote the run");
  }
}

void write_run_state(const RunLayout& layout, const RunState& state) {
  write_file_atomically(layout.state_file().string(), to_json(state).dump(1) + "\n");
}

std::string encode_run_state(const RunState& state) { return to_json(state).dump(); }

RunState decode_run_state(std::string_view text) {
  try {
    return from_json(json::parse(text));
  } catch (const json::exception& e) {
    throw std::invalid_argument(std::string("malformed run state: ") + e.what());
  }
}

std::string utc_now_iso8601() {
  const auto now = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm tm{};
  gmtime_r(&now, &tm);
  char text[32];
  std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return text;
}

}  // namespace planmill
