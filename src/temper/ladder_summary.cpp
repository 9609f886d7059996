#include "planmill/temper/ladder_summary.hpp"

#include <cmath>
#include <cstdio>

#include "planmill/io/json_number.hpp"

namespace planmill {

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
                            {"acceptance", json_number(s.swap_acceptance(r))}});
  out["time_on_rung"] = nlohmann::json::array();
  for (std::size_t i = 0; i < rungs; ++i) {
    nlohmann::json row = nlohmann::json::array();
    for (std::size_t r = 0; r < rungs; ++r) row.push_back(json_number(s.time_fraction(i, r)));
    out["time_on_rung"].push_back(std::move(row));
  }
  out["up_fraction"] = nlohmann::json::array();
  for (std::size_t r = 0; r < rungs; ++r)
    out["up_fraction"].push_back(json_number(s.up_fraction(r)));
  out["round_trips"] = s.round_trips;
  out["mean_round_trip_steps"] = json_number(s.mean_round_trip());
  return out;
}

namespace {

std::string fixed(double x, int digits) {
  char text[32];
  std::snprintf(text, sizeof text, "%.*f", digits, x);
  return text;
}

}  // namespace

LadderReport describe_ladder(const nlohmann::json& summary) {
  LadderReport out;
  const std::string name = "ladder " + std::to_string(summary.at("ladder").get<std::uint64_t>());
  const auto betas = summary.at("betas").get<std::vector<double>>();
  std::string line = name + (summary.at("tuned").get<bool>() ? " (tuned)" : "") + ": betas";
  for (const double b : betas) line += " " + fixed(b, 3);
  line += "; swap acceptance";
  std::uint64_t rounds = 0;
  const auto& pairs = summary.at("pairs");
  for (std::size_t r = 0; r < pairs.size(); ++r) {
    const auto& pair = pairs[r];
    const auto attempts = pair.at("attempts").get<std::uint64_t>();
    rounds += attempts;
    const auto& acceptance = pair.at("acceptance");
    line += acceptance.is_null() ? " -" : " " + fixed(acceptance.get<double>(), 2);
    if (attempts >= kPairAttemptsToJudge && !acceptance.is_null() &&
        acceptance.get<double>() < kLowSwapAcceptance) {
      out.warnings.push_back(
          name + ": rungs " + std::to_string(r) + " and " + std::to_string(r + 1) + " (beta " +
          fixed(betas.at(r), 3) + " and " + fixed(betas.at(r + 1), 3) + ") swap in " +
          fixed(100.0 * acceptance.get<double>(), 1) + "% of " + std::to_string(attempts) +
          " attempts, so replicas rarely cross there; add a rung between them or set tune = true");
    }
  }
  // Rounds alternate between the even and the odd pairs: attempts over all pairs ~ rounds P / 2.
  if (!pairs.empty()) rounds = rounds * 2 / pairs.size();
  const auto trips = summary.at("round_trips").get<std::uint64_t>();
  line += "; " + std::to_string(trips) + " round trip" + (trips == 1 ? "" : "s");
  const auto& mean = summary.at("mean_round_trip_steps");
  if (!mean.is_null()) line += ", mean " + fixed(mean.get<double>(), 0) + " steps";
  out.line = line;
  if (trips == 0 && rounds >= kRoundsToJudgeTrips) {
    out.warnings.push_back(name + ": no replica went from the target rung to the hottest and back in " +
                           std::to_string(rounds) +
                           " swap rounds, so the hot rungs do not feed the target; run longer or add "
                           "rungs (a pair that rarely swaps is the usual cause)");
  }
  return out;
}

}  // namespace planmill
