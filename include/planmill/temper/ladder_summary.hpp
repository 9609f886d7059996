#pragma once
// A ladder's frozen rungs and statistics as JSON, for the run state and the manifest:
//   {"ladder": l, "tuned": bool, "betas": [...], "steps": n, "swap_every": s,
//    "pairs": [{"rungs": [r, r+1], "attempts": a, "accepted": b, "acceptance": b/a}, ...],
//    "time_on_rung": [[fraction per rung] per replica], "up_fraction": [per rung],
//    "round_trips": n, "mean_round_trip_steps": x}
// NaN values (nothing measured yet) are written as null.
#include <nlohmann/json.hpp>

#include "planmill/temper/ladder.hpp"

namespace planmill {

[[nodiscard]] nlohmann::json ladder_summary(const Ladder& ladder);

}  // namespace planmill
