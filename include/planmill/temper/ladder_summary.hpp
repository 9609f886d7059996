#pragma once
// A ladder's frozen rungs and statistics as JSON, for the run state and the manifest:
//   {"ladder": l, "tuned": bool, "betas": [...], "steps": n, "swap_every": s,
//    "pairs": [{"rungs": [r, r+1], "attempts": a, "accepted": b, "acceptance": b/a}, ...],
//    "time_on_rung": [[fraction per rung] per replica], "up_fraction": [per rung],
//    "round_trips": n, "mean_round_trip_steps": x}
// NaN values (nothing measured yet) are written as null.
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "planmill/temper/ladder.hpp"

namespace planmill {

[[nodiscard]] nlohmann::json ladder_summary(const Ladder& ladder);

// How a ladder did, in words, from its summary: one line of facts, then warnings for neighbours
// that rarely swap (acceptance below kLowSwapAcceptance after at least kPairAttemptsToJudge
// attempts; the usual aim is 20-40%, docs/tempering.md) and for no round trip after at least
// kRoundsToJudgeTrips swap rounds. Warnings inform; the verdict stays with R-hat and ESS.
inline constexpr double kLowSwapAcceptance = 0.10;
inline constexpr std::uint64_t kPairAttemptsToJudge = 200;
inline constexpr std::uint64_t kRoundsToJudgeTrips = 1000;
struct LadderReport {
  std::string line;
  std::vector<std::string> warnings;
};
// Throws nlohmann::json::exception on a summary without the keys above.
[[nodiscard]] LadderReport describe_ladder(const nlohmann::json& summary);

}  // namespace planmill
