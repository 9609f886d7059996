// planmill report against the number of records: for each size, a real run folder (synth's
// 200-unit state, 4 districts, flip, 4 chains, a record every step; made by the planmill binary
// and not timed), then build_report without and with a compared plan, timed, and the HTML's size.
// PLANMILL_BENCH_RECORDS="10000,40000" picks the sizes (records over all chains);
// PLANMILL_BIN the planmill binary (default <source>/build/planmill). A scratch folder under
// $TMPDIR is used and removed.
#include <unistd.h>

#include <chrono>
#include <ctime>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "planmill/report/run_report.hpp"

namespace {

namespace fs = std::filesystem;

int shell(const std::string& command) { return std::system(command.c_str()); }

double seconds_since(std::chrono::steady_clock::time_point t0) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

// This process's CPU time (the report is built here, on one thread; the run is a child process).
double cpu_seconds() { return static_cast<double>(std::clock()) / CLOCKS_PER_SEC; }

}  // namespace

int main() {
  const char* env_bin = std::getenv("PLANMILL_BIN");
  const std::string bin = env_bin ? env_bin : std::string(PLANMILL_SOURCE_DIR) + "/build/planmill";
  const char* env_sizes = std::getenv("PLANMILL_BENCH_RECORDS");
  std::vector<std::size_t> sizes;
  std::stringstream list(env_sizes ? env_sizes : "10000,40000,160000");
  for (std::string cell; std::getline(list, cell, ',');) sizes.push_back(std::stoul(cell));
  const fs::path dir = fs::temp_directory_path() / ("planmill-bench-report-" + std::to_string(::getpid()));
  fs::remove_all(dir);
  fs::create_directories(dir);
  if (shell(bin + " synth --units 200 --districts 4 --seed 5 --out " + (dir / "state").string() + " >/dev/null") != 0)
    return 1;
  std::printf("records,chains,run_s,report_s,report_cpu_s,report_with_plan_s,report_with_plan_cpu_s,html_bytes,"
              "html_with_plan_bytes,figures\n");
  for (const std::size_t records : sizes) {
    const std::size_t chains = 4, steps = records / chains + 100;
    const fs::path job = dir / ("job-" + std::to_string(records) + ".toml");
    std::ifstream base(dir / "state" / "job.toml");
    std::ofstream(job) << base.rdbuf() << "[sampler]\nkernel = \"flip\"\nchains = " << chains << "\nsteps = " << steps
                       << "\nburn_in = 100\nseed = 3\n[output]\ncheckpoint_seconds = 3000\n";
    fs::copy_file(job, dir / "state" / job.filename(), fs::copy_options::overwrite_existing);
    const fs::path run = dir / ("run-" + std::to_string(records));
    auto t0 = std::chrono::steady_clock::now();
    if (shell(bin + " run " + (dir / "state" / job.filename()).string() + " --output " + run.string() +
              " --quiet >/dev/null 2>&1") != 0)
      return 1;
    const double run_s = seconds_since(t0);
    if (shell(bin + " export " + run.string() + " --out " + (dir / "csv").string() + " --plans 0:5 >/dev/null 2>&1") != 0)
      return 1;
    planmill::report::ReportOptions o;
    o.run_dir = run.string();
    t0 = std::chrono::steady_clock::now();
    double c0 = cpu_seconds();
    const planmill::report::Report plain = planmill::report::build_report(o);
    const double plain_s = seconds_since(t0), plain_cpu = cpu_seconds() - c0;
    o.plan_file = (dir / "csv" / "plans" / "chain-0-record-5.csv").string();
    t0 = std::chrono::steady_clock::now();
    c0 = cpu_seconds();
    const planmill::report::Report with_plan = planmill::report::build_report(o);
    const double plan_s = seconds_since(t0), plan_cpu = cpu_seconds() - c0;
    std::printf("%zu,%zu,%.2f,%.2f,%.2f,%.2f,%.2f,%zu,%zu,%zu\n", records, chains, run_s, plain_s, plain_cpu, plan_s,
                plan_cpu, plain.html.size(), with_plan.html.size(), with_plan.figures.size());
    std::fflush(stdout);
    fs::remove_all(run);
    fs::remove_all(dir / "csv");
  }
  fs::remove_all(dir);
  return 0;
}
