// Recording: this rank's plan file of the segment, opened at the first record, and the plans
// with their observables and sorted vectors of chains and of ladders' recorded rungs written into it (a replica held on
// another rank sends its plan to the ladder's home rank).
#include "run/chain_runner.hpp"

#include <span>

#include "planmill/run/observables.hpp"

namespace planmill::runner {
namespace {

// Point-to-point messages: a plan recorded by a ladder's home rank from a replica held elsewhere.
constexpr int kRecordTag = 17;
static_assert(sizeof(DistrictIndex) == 2, "plans travel as MPI_UINT16_T");

}  // namespace

void ChainRunner::open_writer() {
  if (writer_) return;
  writer_file_ = RunLayout::plan_file_name(segment_, w_.rank);
  if (header_.unit_count == 0) {
    header_.unit_count = loaded_->graph->unit_count();
    header_.district_count = loaded_->job.districts;
    header_.job_text = loaded_->job.text;
    header_.adjacency = unit_adjacency(*loaded_->graph);
  }
  writer_ = std::make_unique<EnsembleWriter>(layout_.resolve(writer_file_).string(), header_);
}

std::size_t ChainRunner::writer_handle(LocalChain& local, std::uint64_t rung) {
  std::size_t& handle = local.handles[rung];
  if (handle == SIZE_MAX)
    handle = writer_->add_chain(rung_record_index(local.entry.index, rung), names_, sorted_names_,
                                header_.district_count);
  return handle;
}

void ChainRunner::record_chain(LocalChain& local, std::uint64_t step) {
  open_writer();
  const ChainState& state = local.chain->state();
  compute_observables(state, *local.measures, row_, sorted_);
  // The units moved since the last record spare the writer a scan of the whole plan.
  writer_->record(writer_handle(local, 0), step, state.plan.assignment(), row_,
                  state.plan.changes(), sorted_);
  local.chain->clear_plan_changes();
  ++local.segment_records;
}

// The home rank records the plan on each recorded rung; a replica held elsewhere sends its plan
// and observables there. (The target rung changes hands on swaps, so ladders' plans go without
// the writer's change hint.)
void ChainRunner::record_ladder(LocalChain& local, std::uint64_t step) {
  const Ladder& ladder = *local.ladder;
  const bool home = local.home == w_.rank;
  if (home) open_writer();
  for (std::uint64_t r = 0; r < local.entry.recorded_rungs; ++r) {
    const std::size_t replica = ladder.replica_on(r);
    const int owner = local.replica_ranks[replica];
    std::span<const DistrictIndex> plan;
    if (owner == w_.rank) {
      const ChainState& state = ladder.replica(replica).state();
      compute_observables(state, *local.measures, row_, sorted_);
      plan = state.plan.assignment();
      if (!home) {
        MPI_Send(row_.data(), static_cast<int>(row_.size()), MPI_DOUBLE, local.home, kRecordTag,
                 MPI_COMM_WORLD);
        MPI_Send(sorted_.data(), static_cast<int>(sorted_.size()), MPI_DOUBLE, local.home,
                 kRecordTag, MPI_COMM_WORLD);
        MPI_Send(plan.data(), static_cast<int>(plan.size()), MPI_UINT16_T, local.home, kRecordTag,
                 MPI_COMM_WORLD);
        continue;
      }
    } else if (home) {
      MPI_Recv(row_.data(), static_cast<int>(row_.size()), MPI_DOUBLE, owner, kRecordTag,
               MPI_COMM_WORLD, MPI_STATUS_IGNORE);
      MPI_Recv(sorted_.data(), static_cast<int>(sorted_.size()), MPI_DOUBLE, owner, kRecordTag,
               MPI_COMM_WORLD, MPI_STATUS_IGNORE);
      MPI_Recv(incoming_plan_.data(), static_cast<int>(incoming_plan_.size()), MPI_UINT16_T,
               owner, kRecordTag, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
      plan = incoming_plan_;
    } else {
      continue;
    }
    writer_->record(writer_handle(local, r), step, plan, row_, PlanChanges{}, sorted_);
  }
  if (home) ++local.segment_records;
}

}  // namespace planmill::runner
