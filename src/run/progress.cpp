// What the user reads: rank 0's progress reports (a bar on a terminal, log lines otherwise) and
// the summary a run ends with.
#include "run/chain_runner.hpp"

#include <spdlog/spdlog.h>
#include <unistd.h>

#include <cstdio>

namespace planmill::runner {
namespace {

std::string duration_text(double seconds) {
  if (!(seconds >= 0) || seconds > 1e8) return "?";
  const auto s = static_cast<long long>(seconds + 0.5);
  char text[32];
  if (s >= 3600) {
    std::snprintf(text, sizeof text, "%lldh%02lldm", s / 3600, (s / 60) % 60);
  } else if (s >= 60) {
    std::snprintf(text, sizeof text, "%lldm%02llds", s / 60, s % 60);
  } else {
    std::snprintf(text, sizeof text, "%llds", s);
  }
  return text;
}


}  // namespace

void ChainRunner::report_progress(const std::uint64_t* all, std::uint64_t steps_before,
                                  Clock::time_point since) {
  const double seconds = std::chrono::duration<double>(Clock::now() - since).count();
  const std::uint64_t mine = total_steps_local() - steps_before;
  std::vector<std::uint64_t> per_rank(static_cast<std::size_t>(w_.size));
  MPI_Gather(&mine, 1, MPI_UINT64_T, per_rank.data(), 1, MPI_UINT64_T, 0, MPI_COMM_WORLD);
  if (!w_.root()) return;
  std::uint64_t sum = 0;
  std::string ranks;
  for (const auto n : per_rank) {
    sum += n;
    if (w_.size > 1) ranks += (ranks.empty() ? "" : " + ") + rate_text(static_cast<double>(n) / seconds);
  }
  const double rate = static_cast<double>(sum) / seconds;
  const double total = static_cast<double>(all[kStepsTotal] + all[kRemaining]);
  const double fraction = total > 0 ? static_cast<double>(all[kStepsTotal]) / total : 1.0;
  const double acceptance =
      all[kStepsTotal] ? static_cast<double>(all[kAccepted]) / static_cast<double>(all[kStepsTotal]) : 0;
  char line[512];
  std::snprintf(line, sizeof line, "%llu plans recorded, %s steps/s%s%s%s, acceptance %.1f%%, %s left",
                static_cast<unsigned long long>(all[kRecords]), rate_text(rate).c_str(),
                ranks.empty() ? "" : " (", ranks.c_str(), ranks.empty() ? "" : " per rank)",
                100.0 * acceptance,
                duration_text(static_cast<double>(all[kRemaining]) / rate).c_str());
  if (::isatty(STDERR_FILENO)) {
    constexpr int kWidth = 24;
    const int filled = static_cast<int>(fraction * kWidth);
    std::fprintf(stderr, "\r[%.*s%.*s] %3.0f%% %s\033[K", filled, "########################",
                 kWidth - filled, "------------------------", 100.0 * fraction, line);
    std::fflush(stderr);
    bar_shown_ = true;
  } else {
    spdlog::info("{:.0f}% {}", 100.0 * fraction, line);
  }
}

std::string ChainRunner::rate_text(double rate) {
  char text[32];
  if (rate >= 1e6) {
    std::snprintf(text, sizeof text, "%.2fM", rate / 1e6);
  } else if (rate >= 1e4) {
    std::snprintf(text, sizeof text, "%.1fk", rate / 1e3);
  } else {
    std::snprintf(text, sizeof text, "%.0f", rate);
  }
  return text;
}

RunOutcome ChainRunner::outcome(RunEnd end, Clock::time_point started,
                                std::uint64_t steps_at_start) {
  if (bar_shown_) std::fprintf(stderr, "\n");
  RunOutcome out;
  out.end = end;
  out.run_dir = layout_.root.string();
  for (const auto& c : state_.chains) out.records += c.records, out.steps += c.steps;
  const double seconds = std::chrono::duration<double>(Clock::now() - started).count();
  const std::uint64_t stepped = sum_over_ranks(total_steps_local() - steps_at_start);
  const std::size_t n = state_.chains.size();
  const std::string what =
      std::to_string(n) + (tempered() ? (n == 1 ? " ladder of " : " ladders of ") +
                                            std::to_string(rungs()) + " rungs"
                                      : (n == 1 ? " chain" : " chains"));
  char line[256];
  std::snprintf(line, sizeof line, "%s on %d rank%s: %llu plans recorded, %llu kernel steps in %s",
                what.c_str(), w_.size, w_.size == 1 ? "" : "s",
                static_cast<unsigned long long>(out.records),
                static_cast<unsigned long long>(stepped), duration_text(seconds).c_str());
  out.summary = line;
  if (end == RunEnd::stopped_on_signal) {
    out.summary += "\nstopped on a signal after a checkpoint; continue with: planmill run " +
                   options_.job_path + " --output " + out.run_dir + " --resume";
    if (options_.until_converged) {
      out.summary += " --until-converged --max-steps " + std::to_string(options_.max_steps);
    }
  } else if (end == RunEnd::converged) {
    out.summary += "\nconverged: the stopping rule holds (every observable passes on the whole "
                   "record and on its later half)";
  } else if (end == RunEnd::budget_spent) {
    out.summary += "\nnot converged within --max-steps " + std::to_string(options_.max_steps) +
                   " steps per chain; failing:" + verdict_summary_ +
                   "\n  run longer, start more chains, or " +
                   (tempered() ? "add rungs to the ladders" : "use tempering");
  }
  return out;
}

}  // namespace planmill::runner
