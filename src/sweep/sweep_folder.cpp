// The sweep folder: written whole (staged beside its place, renamed in), and read back.
#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>

#include "planmill/base/error.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/sweep/sweep.hpp"

namespace planmill::sweep {
namespace {

namespace fs = std::filesystem;

std::string read_text(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

nlohmann::ordered_json settings_json(const SweepPlan& plan) {
  nlohmann::ordered_json j;
  j["sweep_file"] = fs::absolute(plan.sweep_file).lexically_normal().string();
  j["base_job"] = plan.base_job;
  j["axes"] = nlohmann::ordered_json::array();
  for (const Axis& a : plan.axes) {
    nlohmann::ordered_json values = nlohmann::ordered_json::array();
    for (const AxisValue& v : a.values) values.push_back(v.label);
    j["axes"].push_back({{"key", a.key}, {"values", values}});
  }
  j["settings"] = nlohmann::ordered_json::array();
  for (const Setting& s : plan.settings) {
    nlohmann::ordered_json values = nlohmann::ordered_json::object();
    for (std::size_t a = 0; a < plan.axes.size(); ++a) values[plan.axes[a].key] = plan.axes[a].values[s.pick[a]].label;
    j["settings"].push_back({{"index", s.index},
                             {"folder", s.folder},
                             {"job", s.folder + "/job.toml"},
                             {"run", s.folder + "/run"},
                             {"values", values}});
  }
  return j;
}

std::string settings_csv(const SweepPlan& plan) {
  std::string csv = "index,folder,job,run";
  for (const Axis& a : plan.axes) csv += "," + a.key;
  csv += "\n";
  for (const Setting& s : plan.settings) {  // folders and labels hold no comma or quote
    csv += std::to_string(s.index) + "," + s.folder + "," + s.folder + "/job.toml," + s.folder + "/run";
    for (std::size_t a = 0; a < plan.axes.size(); ++a) csv += "," + plan.axes[a].values[s.pick[a]].label;
    csv += "\n";
  }
  return csv;
}

// Every file of the sweep folder, by path inside it.
std::vector<std::pair<std::string, std::string>> folder_files(const SweepPlan& plan) {
  std::vector<std::pair<std::string, std::string>> files = {
      {"sweep.toml", plan.sweep_text}, {"settings.json", settings_json(plan).dump(2) + "\n"},
      {"settings.csv", settings_csv(plan)}};
  for (const Setting& s : plan.settings) files.emplace_back(s.folder + "/job.toml", s.job_text);
  return files;
}

}  // namespace

bool write_sweep(const SweepPlan& plan, const std::string& out_dir) {
  const auto files = folder_files(plan);
  const fs::path out = fs::absolute(out_dir).lexically_normal();
  std::error_code ec;
  if (fs::exists(out)) {
    if (!fs::is_directory(out))
      throw InputError({out_dir, 0, "--out"}, "is a file, not a folder", "choose a folder for the sweep");
    if (!fs::is_empty(out, ec)) {
      bool same = true;
      for (const auto& [path, text] : files) same = same && fs::exists(out / path) && read_text(out / path) == text;
      if (same) return false;
      throw InputError({out_dir, 0, "--out"}, "holds something other than this sweep's plan",
                       "choose another --out folder, or remove this one");
    }
  }
  // Staged beside its place, then renamed: the folder is there whole, or not at all.
  const fs::path staged = out.parent_path() / ("." + out.filename().string() + ".staged-" + std::to_string(::getpid()));
  fs::remove_all(staged, ec);
  try {
    for (const auto& [path, text] : files) {
      fs::create_directories((staged / path).parent_path(), ec);
      if (ec) throw OutputError((staged / path).parent_path().string() + ": cannot create the folder: " + ec.message());
      write_file_atomically((staged / path).string(), text);
    }
    if (fs::exists(out)) fs::remove(out, ec);  // empty, as checked above
    fs::rename(staged, out, ec);
    if (ec) throw OutputError(out.string() + ": cannot move the staged sweep folder into place: " + ec.message());
  } catch (...) {
    fs::remove_all(staged, ec);
    throw;
  }
  return true;
}

SweepFolder read_sweep_folder(const std::string& dir) {
  const fs::path root = fs::absolute(dir).lexically_normal();
  const fs::path table = root / "settings.json";
  if (!fs::is_regular_file(table))
    throw InputError({dir, 0, {}}, "is not a sweep folder (it has no settings.json)",
                     "give the folder that 'planmill sweep plan SWEEP.toml --out DIR' wrote");
  const nlohmann::json j = nlohmann::json::parse(read_text(table), nullptr, false);
  SweepFolder f;
  f.dir = root.string();
  try {
    if (j.is_discarded()) throw nlohmann::json::other_error::create(0, "not JSON", nullptr);
    for (const auto& a : j.at("axes")) {
      f.keys.push_back(a.at("key").get<std::string>());
      f.axis_values.push_back(a.at("values").get<std::vector<std::string>>());
    }
    for (const auto& s : j.at("settings")) {
      SweepSetting setting;
      setting.index = s.at("index").get<std::size_t>();
      setting.folder = (root / s.at("folder").get<std::string>()).string();
      setting.job = (root / s.at("job").get<std::string>()).string();
      setting.run = (root / s.at("run").get<std::string>()).string();
      for (const std::string& key : f.keys) setting.values.push_back(s.at("values").at(key).get<std::string>());
      if (setting.index != f.settings.size()) throw nlohmann::json::other_error::create(0, "index out of order", nullptr);
      f.settings.push_back(std::move(setting));
    }
  } catch (const nlohmann::json::exception& e) {
    throw InputError({table.string(), 0, {}}, std::string("is damaged: ") + e.what(),
                     "plan the sweep again into a new folder (planmill sweep plan)");
  }
  return f;
}

}  // namespace planmill::sweep
