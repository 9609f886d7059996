// planmill synth: write the invented demo state into a folder.
#include <cstdio>
#include <iostream>
#include <memory>

#include "cli/commands.hpp"
#include "planmill/synth/synth.hpp"

namespace planmill::cli {

void add_synth_command(CLI::App& app, Action& action) {
  auto options = std::make_shared<SynthOptions>();
  auto* sub = app.add_subcommand(
      "synth", "write an invented state (unit table, adjacency, GeoJSON, job file) to a folder");
  sub->add_option("--units", options->units, "number of units (>= 16, >= 2 x districts)")
      ->capture_default_str();
  sub->add_option("--districts", options->districts, "district count for the job file")
      ->capture_default_str();
  sub->add_option("--seed", options->seed, "seed; the same seed gives identical files")
      ->capture_default_str();
  sub->add_option("--cities", options->cities,
                  "number of dense cities, 1 to 6 (default: 3 to 6 by map size)");
  sub->add_option("--out", options->out_dir, "output folder (created if missing)")->required();
  sub->callback([options, &action] {
    action = [options] {
      const SynthSummary s = write_synthetic_state(*options);
      char line[256];
      std::snprintf(line, sizeof line,
                    "synth: %zu units, %zu adjacencies, %zu counties, %zu municipalities "
                    "(%zu cities), area %.0f km^2\n",
                    s.units, s.edges, s.counties, s.municipalities, s.cities, s.area_km2);
      std::cout << line;
      std::snprintf(
          line, sizeof line,
          "synth: population %lld (group %.1f%%), ideal district %.0f, largest unit "
          "%lld\n",
          static_cast<long long>(s.population),
          100.0 * static_cast<double>(s.group_population) / static_cast<double>(s.population),
          s.ideal_district_population, static_cast<long long>(s.largest_unit_population));
      std::cout << line;
      for (const auto& e : s.elections) {
        std::snprintf(line, sizeof line, "synth: election %s: party A %.1f%%\n", e.name.c_str(),
                      100.0 * e.share_a);
        std::cout << line;
      }
      for (const auto& f : s.files) std::cout << "synth: wrote " << f << "\n";
      return 0;
    };
  });
}

}  // namespace planmill::cli
