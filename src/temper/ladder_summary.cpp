#include "planmill/temper/ladder_summary.hpp"

#include <cmath>

namespace planmill {
namespace {

nlohmann::json number_or_null(double x) {
  return std::isfinite(x) ? nlohmann::json(x) : nlohmann::json();
}

}  // namespace

nlohmann::json ladder_summary(const Ladder& ladder) {
  const LadderStatistics& s = ladder.statistics();
  const std::size_t rungs = ladder.rungs();
  nlohmann::json out;
  out["ladder"] = ladder.ladder_index();
  out["tuned"] = ladder.tuned();
  out["betas"] = ladder.betas();
  out["steps"] = ladder.steps();
  out["swap_every"] = ladder.swap_every();
  out["pairs"] = nlohmann::json::array();
  for (std::size_t r = 0; r + 1 < rungs; ++r)
    out["pairs"].push_back({{"rungs", {r, r + 1}},
                            {"attempts", s.swap_attempts[r]},
                            {"accepted", s.swap_accepts[r]},
                            {"acceptance", number_or_null(s.swap_acceptance(r))}});
  out["time_on_rung"] = nlohmann::json::array();
  for (std::size_t i = 0; i < rungs; ++i) {
    nlohmann::json row = nlohmann::json::array();
    for (std::size_t r = 0; r < rungs; ++r) row.push_back(number_or_null(s.time_fraction(i, r)));
    out["time_on_rung"].push_back(std::move(row));
  }
  out["up_fraction"] = nlohmann::json::array();
  for (std::size_t r = 0; r < rungs; ++r)
    out["up_fraction"].push_back(number_or_null(s.up_fraction(r)));
  out["round_trips"] = s.round_trips;
  out["mean_round_trip_steps"] = number_or_null(s.mean_round_trip());
  return out;
}

}  // namespace planmill
