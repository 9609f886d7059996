#pragma once
// Rule sweeps (docs/sweep.md): one base job under every combination of a few job keys' values
// (the axes), one run per combination (a setting). A sweep file names the base job and the axes;
// planning expands the grid, writes each setting's job text (the base job with the axes' values
// set, its input paths made absolute, its runs in the setting's folder) and checks every one with
// the job reader and against the map before anything is written. A sweep folder holds the sweep
// file's copy, one folder per setting (job.toml, and run/ once it runs) and the settings table.
#include <cstddef>
#include <string>
#include <vector>

namespace planmill::sweep {

// The keys an axis may set: hard limits, soft weights and sampler settings (docs/sweep.md).
[[nodiscard]] const std::vector<std::string>& sweepable_keys();

// A value as the sweep file wrote it: TOML text (`0.05`, `6`, `"flip"`), or `"none"`: the key
// left out of the setting's job, so that the job reader's default (often: no limit) holds.
struct AxisValue {
  std::string toml;   // the value as TOML writes it; "none" for a key left out
  std::string label;  // short, for folder names and tables: 0.05, 6, flip, none
  bool unset = false;
};

struct Axis {
  std::string key;
  std::size_t line = 0;  // in the sweep file
  std::vector<AxisValue> values;
};

struct Setting {
  std::size_t index = 0;          // 0-based, as a Slurm array task id
  std::vector<std::size_t> pick;  // pick[a]: the value of axis a
  std::string folder;             // "settings/003-population_tolerance-0.02"
  std::string job_text;           // the setting's job file
};

struct SweepPlan {
  std::string sweep_file, sweep_text;
  std::string base_job;  // as resolved against the sweep file's folder
  std::vector<Axis> axes;
  std::vector<Setting> settings;  // the product of the axes, the last axis varying fastest
};

// Reads the sweep file, expands the grid and checks every setting's job with the job reader and
// on the base job's map (a setting whose job the reader refuses names the setting and the axis).
// `out_dir` is where the sweep folder will be (the setting jobs name their run folders in it).
// Throws InputError (the sweep file, the key, the fix) or InfeasibleError.
[[nodiscard]] SweepPlan plan_sweep(const std::string& sweep_file, const std::string& out_dir);

// One line per setting: index, folder, each axis's value.
[[nodiscard]] std::string describe_plan(const SweepPlan& plan);

// Writes the sweep folder whole (staged beside it, then renamed into place): sweep.toml,
// settings.csv, settings.json and settings/<folder>/job.toml. A folder that already holds the
// same plan is left alone (returns false); one that holds anything else is an InputError.
bool write_sweep(const SweepPlan& plan, const std::string& out_dir);

// A sweep folder as `write_sweep` left it.
struct SweepSetting {
  std::size_t index = 0;
  std::string folder;                 // absolute
  std::string job;                    // folder + "/job.toml"
  std::string run;                    // folder + "/run"
  std::vector<std::string> values;    // labels, one per axis
};
struct SweepFolder {
  std::string dir;
  std::vector<std::string> keys;      // the axes' keys
  std::vector<std::vector<std::string>> axis_values;  // each axis's labels, in the file's order
  std::vector<SweepSetting> settings;
};
// Throws InputError when `dir` is not a sweep folder.
[[nodiscard]] SweepFolder read_sweep_folder(const std::string& dir);

}  // namespace planmill::sweep
