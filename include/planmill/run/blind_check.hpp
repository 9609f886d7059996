#pragma once
// The blind check of a run (docs/manifest.md, "blind_check"): for a job whose rules read no group
// or vote column, a few chains are drawn again from their first state on a copy of the map in which
// every group and vote column is permuted across the units (population, counties, municipalities
// and shapes untouched), and the plans drawn are compared with the stored records, label for
// label. A blind run draws the same plans; a run whose rules read those columns, forced through
// the check, does not.
//
// Where a stretch starts: the run state keeps one exact state per chain, the last checkpoint's, so
// the only earlier exact state is the chain's first (its start plan and stream, drawn again).
// Every stretch therefore starts at step 0 and runs to its R-th record (burn-in included); when the
// chain has taken no more steps than that, it runs to the end and its exact state (plan, stream,
// counters) is compared with the committed snapshot too.
//
// Which chains: drawn without replacement by the stream make_stream(run seed, kBlindChainStreamKey);
// the permutation is one cycle through every unit (Sattolo's algorithm) drawn by
// make_stream(run seed, kBlindPermutationStreamKey), so every unit takes another unit's values.
// A stretch that differs is drawn again on the map as it is: when that fails to reproduce the
// stored plans too, the build cannot redraw the run (result "not reproduced"), not the columns.
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "planmill/base/ids.hpp"
#include "planmill/run/run_reader.hpp"

namespace planmill {

// Far above every chain index, ladder swap stream (2^62 + l) and seed-plan stream (3 * 2^61 + c).
inline constexpr std::uint64_t kBlindChainStreamKey = std::uint64_t{7} << 60;
inline constexpr std::uint64_t kBlindPermutationStreamKey = kBlindChainStreamKey + 1;

struct BlindCheckOptions {
  std::uint64_t stretches = 3;  // chains drawn again; 0: no check
  std::uint64_t records = 10;   // records compared per stretch, the chain's first ones
  bool force = false;           // check even a job whose rules read group columns
};

struct BlindStretch {
  std::uint64_t chain = 0;
  std::uint64_t first_step = 0;  // always 0 (see the top of this file)
  std::uint64_t steps = 0;       // steps drawn again
  std::uint64_t records_compared = 0;
  // Compared records whose plan differs from the plan before it (the first: from the start plan).
  std::uint64_t records_changed = 0;
  bool final_state_compared = false;  // the stretch reached the chain's end: snapshot compared
  std::string result;  // "identical", "differed", "not reproduced" or "nothing compared" (no records yet)
  // The first difference: the step, the record (none when it was the final state) and the units
  // whose label differs (0 when only the stream or counters of the final state differ).
  std::optional<std::uint64_t> differed_at_step, differed_at_record;
  std::uint64_t units_differing = 0;
};

struct BlindCheck {
  // "identical", "differed", "not reproduced", "not applicable" (a rule reads group columns and
  // the check was not forced) or "not checked" (why says why: no map to read, nothing to permute,
  // a pool, --blind-stretches 0).
  std::string result;
  std::string why;
  bool rules_known = false;  // the job was read (rules_read_group_columns is known)
  bool rules_read_group_columns = false;
  bool forced = false;
  std::uint64_t seed = 0;
  std::vector<std::string> columns;          // permuted, by name
  std::uint64_t units_with_changed_values = 0;  // units where some permuted column changed
  std::string permutation_sha256;  // of the source unit of every unit, as decimal text, space-separated
  bool build_matches_run = false;  // every build that drew the run is this one
  std::uint64_t records_per_stretch = 0;
  std::vector<BlindStretch> stretches;
  std::uint64_t steps_drawn = 0;  // kernel steps of all stretches (ladders: ladder steps)
};

// Sattolo's cyclic permutation of 0..n-1: source[u] is the unit whose values unit u takes.
[[nodiscard]] std::vector<UnitIndex> blind_permutation(std::uint64_t run_seed, std::size_t units);

// Never throws for what it cannot check: that is a "not checked" with the reason.
[[nodiscard]] BlindCheck check_blindness(const RunReader& reader, const BlindCheckOptions& options);

}  // namespace planmill
