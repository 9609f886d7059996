// The manifest's "blind_check" section (docs/manifest.md) from run/blind_check.hpp's result.
#include "planmill/manifest/manifest.hpp"

namespace planmill {

nlohmann::ordered_json blind_check_json(const BlindCheck& check) {
  using json = nlohmann::ordered_json;
  const auto optional = [](const std::optional<std::uint64_t>& v) { return v ? json(*v) : json(nullptr); };
  json stretches = json::array();
  for (const auto& s : check.stretches) {
    stretches.push_back({{"chain", s.chain},
                         {"first_step", s.first_step},
                         {"steps", s.steps},
                         {"records_compared", s.records_compared},
                         {"records_changed", s.records_changed},
                         {"final_state_compared", s.final_state_compared},
                         {"result", s.result},
                         {"differed_at_step", optional(s.differed_at_step)},
                         {"differed_at_record", optional(s.differed_at_record)},
                         {"units_differing", s.units_differing}});
  }
  json differed = nullptr;
  for (const auto& s : check.stretches) {
    if (s.result == "differed") {
      differed = {{"chain", s.chain}, {"step", optional(s.differed_at_step)}};
      break;
    }
  }
  const bool ran = !check.stretches.empty();
  return {{"result", check.result},
          {"why", check.why.empty() ? json(nullptr) : json(check.why)},
          {"applicable", check.rules_known ? json(!check.rules_read_group_columns) : json(nullptr)},
          {"forced", check.forced},
          {"differed_at", differed},
          {"columns_permuted", check.columns},
          {"permutation",
           ran ? json{{"kind", "one cycle through every unit (Sattolo)"},
                      {"seed", check.seed},
                      {"stream_key", kBlindPermutationStreamKey},
                      {"sha256", check.permutation_sha256},
                      {"units_with_changed_values", check.units_with_changed_values}}
               : json(nullptr)},
          {"chains_drawn_by",
           ran ? json{{"seed", check.seed}, {"stream_key", kBlindChainStreamKey}} : json(nullptr)},
          {"records_per_stretch", check.records_per_stretch},
          {"stretches", stretches},
          {"steps_drawn", check.steps_drawn},
          {"build_matches_run", check.build_matches_run}};
}

}  // namespace planmill
