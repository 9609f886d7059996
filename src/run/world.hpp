#pragma once
// The runner's process world: this rank and the rank count, the collectives the runner shares
// text and counters by, the agreement helpers that end every rank together when one fails, the
// signal flags and fsync of a folder. Private to src/run.
#include <mpi.h>

#include <csignal>
#include <exception>
#include <filesystem>
#include <string>
#include <vector>

#include "planmill/base/error.hpp"
#include "planmill/run/runner.hpp"
#include "planmill/store/ensemble.hpp"

namespace planmill::runner {

// Set by the signal handlers (install_run_signal_handlers), read and cleared by the round loop.
extern volatile std::sig_atomic_t g_stop_requested;
extern volatile std::sig_atomic_t g_checkpoint_requested;

struct World {
  int rank = 0, size = 1;
  [[nodiscard]] bool root() const { return rank == 0; }
};

World world();

// Rank 0's text, on every rank.
std::string broadcast_string(std::string text);

// On rank 0: every rank's text, by rank; elsewhere: empty.
std::vector<std::string> gather_strings(const std::string& mine, const World& w);

// Runs `work`; returns the exit status its error maps to (0: none) and keeps the error.
template <class Work>
int attempt(Work&& work, std::exception_ptr& error) {
  try {
    work();
    return 0;
  } catch (const InputError&) {
    error = std::current_exception();
    return 2;
  } catch (const InfeasibleError&) {
    error = std::current_exception();
    return 2;
  } catch (const OutputError&) {
    error = std::current_exception();
    return 5;
  } catch (...) {
    error = std::current_exception();
    return 1;
  }
}

// Runs `work` on rank 0 and shares how it went: a problem there ends every rank (rank 0 throws
// the real error, the others RunFailedElsewhere).
template <class Work>
void on_root_then_agree(const World& w, Work&& work) {
  std::exception_ptr error;
  int status = w.root() ? attempt(work, error) : 0;
  MPI_Bcast(&status, 1, MPI_INT, 0, MPI_COMM_WORLD);
  if (error) std::rethrow_exception(error);
  if (status != 0) throw RunFailedElsewhere{status};
}

// Every rank does `work`; if any rank fails, all stop (the failing ones rethrow their error).
template <class Work>
void everywhere_then_agree(Work&& work) {
  std::exception_ptr error;
  const int status = attempt(work, error);
  int worst = 0;
  MPI_Allreduce(&status, &worst, 1, MPI_INT, MPI_MAX, MPI_COMM_WORLD);
  if (error) std::rethrow_exception(error);
  if (worst != 0) throw RunFailedElsewhere{worst};
}

std::string host_name();

void fsync_path(const std::filesystem::path& path);

// The counters summed over the ranks of `comm`.
StoredCounters add_over(const StoredCounters& mine, MPI_Comm comm);

}  // namespace planmill::runner
