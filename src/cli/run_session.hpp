#pragma once
// What `planmill run` and `planmill sweep run` share (private to src/cli): MPI for the length of
// the command, the runner's logging, and the runner's ends and errors as exit statuses.
#include <mpi.h>
#include <spdlog/spdlog.h>

#include <cstdlib>
#include <functional>
#include <iostream>
#include <string>

#include "planmill/base/error.hpp"
#include "planmill/run/runner.hpp"

namespace planmill::cli {

// MPI for the length of one command: it works alone (one rank) and under mpiexec.
class MpiSession {
 public:
  MpiSession() {
    int provided = 0;
    MPI_Init_thread(nullptr, nullptr, MPI_THREAD_FUNNELED, &provided);
    MPI_Comm_rank(MPI_COMM_WORLD, &rank_);
    MPI_Comm_size(MPI_COMM_WORLD, &size_);
  }
  ~MpiSession() { MPI_Finalize(); }
  MpiSession(const MpiSession&) = delete;
  MpiSession& operator=(const MpiSession&) = delete;
  [[nodiscard]] int rank() const { return rank_; }
  [[nodiscard]] int size() const { return size_; }
  // A failure that the other ranks do not know of: end them all.
  [[noreturn]] void abort(int status) const {
    MPI_Abort(MPI_COMM_WORLD, status);
    std::exit(status);
  }
  [[nodiscard]] std::string prefix() const {
    return size_ > 1 ? "planmill[rank " + std::to_string(rank_) + "]: " : "planmill: ";
  }

 private:
  int rank_ = 0, size_ = 1;
};

inline int exit_status(RunEnd end) {
  switch (end) {
    case RunEnd::finished:
    case RunEnd::converged:
    case RunEnd::nothing_to_do:
      return 0;
    case RunEnd::budget_spent:
      return 3;
    case RunEnd::stopped_on_signal:
      return 4;
  }
  return 1;
}

// Progress on rank 0 at `log_level` (warnings only when quiet), warnings only on the other ranks;
// the runner's signal handlers installed.
inline void start_run_logging(const MpiSession& mpi, const std::string& log_level, bool quiet) {
  spdlog::set_pattern("[%Y-%m-%d %H:%M:%S] %v");
  spdlog::set_level(quiet ? spdlog::level::warn : spdlog::level::from_str(log_level));
  if (mpi.rank() != 0) spdlog::set_level(spdlog::level::warn);
  install_run_signal_handlers();
}

// Runs `body` (collective over the ranks) and turns the runner's errors into exit statuses: one
// message from the rank that saw the problem, 2 for bad input, 5 for an output not written.
inline int guarded_run(const MpiSession& mpi, const std::function<int()>& body) {
  try {
    return body();
  } catch (const RunFailedElsewhere& e) {
    return e.exit_status;
  } catch (const InputError& e) {
    std::cerr << mpi.prefix() << "error: " << e.what() << "\n";
    return 2;
  } catch (const InfeasibleError& e) {
    std::cerr << mpi.prefix() << "error: " << e.what() << "\n";
    return 2;
  } catch (const OutputError& e) {  // agreed by every rank: each ends cleanly
    std::cerr << mpi.prefix() << "error: " << e.what() << "\n";
    return 5;
  } catch (const std::exception& e) {
    std::cerr << mpi.prefix() << "error: " << e.what() << "\n";
    if (mpi.size() > 1) mpi.abort(1);
    return 1;
  }
}

}  // namespace planmill::cli
