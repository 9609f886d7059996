// The runner's process world (run/world.hpp): ranks and collectives, signal flags and their
// handlers, fsync of a folder.
#include "run/world.hpp"

#include <fcntl.h>
#include <unistd.h>

#include <cstdint>
#include <stdexcept>

namespace planmill {

namespace runner {
volatile std::sig_atomic_t g_stop_requested = 0;
volatile std::sig_atomic_t g_checkpoint_requested = 0;
}  // namespace runner

namespace {
extern "C" void on_stop_signal(int /*signal*/) { runner::g_stop_requested = 1; }
extern "C" void on_checkpoint_signal(int /*signal*/) { runner::g_checkpoint_requested = 1; }
}  // namespace

void install_run_signal_handlers() {
  struct sigaction stop {};
  stop.sa_handler = on_stop_signal;
  sigemptyset(&stop.sa_mask);
  sigaction(SIGTERM, &stop, nullptr);
  sigaction(SIGINT, &stop, nullptr);
  // OpenMPI's mpiexec and Slurm's srun pass SIGUSR2 on to every rank and leave the ranks to end
  // by themselves, so the exit status 4 reaches the batch script; sent SIGTERM, mpiexec kills the
  // ranks a second later and exits 1 whatever they did.
  sigaction(SIGUSR2, &stop, nullptr);
  struct sigaction checkpoint {};
  checkpoint.sa_handler = on_checkpoint_signal;
  sigemptyset(&checkpoint.sa_mask);
  sigaction(SIGUSR1, &checkpoint, nullptr);
}

namespace runner {

namespace fs = std::filesystem;

World world() {
  World w;
  MPI_Comm_rank(MPI_COMM_WORLD, &w.rank);
  MPI_Comm_size(MPI_COMM_WORLD, &w.size);
  return w;
}

std::string broadcast_string(std::string text) {
  std::uint64_t size = text.size();
  MPI_Bcast(&size, 1, MPI_UINT64_T, 0, MPI_COMM_WORLD);
  text.resize(size);
  MPI_Bcast(text.data(), static_cast<int>(size), MPI_CHAR, 0, MPI_COMM_WORLD);
  return text;
}

std::vector<std::string> gather_strings(const std::string& mine, const World& w) {
  const int size = static_cast<int>(mine.size());
  std::vector<int> sizes(static_cast<std::size_t>(w.size)), offsets(sizes.size());
  MPI_Gather(&size, 1, MPI_INT, sizes.data(), 1, MPI_INT, 0, MPI_COMM_WORLD);
  std::string all;
  if (w.root()) {
    int total = 0;
    for (std::size_t r = 0; r < sizes.size(); ++r) offsets[r] = total, total += sizes[r];
    all.resize(static_cast<std::size_t>(total));
  }
  MPI_Gatherv(mine.data(), size, MPI_CHAR, all.data(), sizes.data(), offsets.data(), MPI_CHAR, 0,
              MPI_COMM_WORLD);
  std::vector<std::string> out;
  if (w.root()) {
    for (std::size_t r = 0; r < sizes.size(); ++r) {
      out.push_back(all.substr(static_cast<std::size_t>(offsets[r]), static_cast<std::size_t>(sizes[r])));
    }
  }
  return out;
}

std::string host_name() {
  char name[MPI_MAX_PROCESSOR_NAME] = {};
  int length = 0;
  MPI_Get_processor_name(name, &length);
  return {name, static_cast<std::size_t>(length)};
}

void fsync_path(const fs::path& path) {
  const int fd = ::open(path.c_str(), O_RDONLY);
  if (fd < 0) throw std::runtime_error("cannot open " + path.string() + " to flush it to disk");
  const int rc = ::fsync(fd);
  ::close(fd);
  if (rc != 0) throw std::runtime_error("cannot flush " + path.string() + " to disk");
}

StoredCounters add_over(const StoredCounters& mine, MPI_Comm comm) {
  std::uint64_t in[5] = {mine.steps, mine.accepted, mine.rejected, mine.no_cut, mine.invalid};
  std::uint64_t out[5] = {};
  MPI_Allreduce(in, out, 5, MPI_UINT64_T, MPI_SUM, comm);
  return {out[0], out[1], out[2], out[3], out[4]};
}

}  // namespace runner
}  // namespace planmill
