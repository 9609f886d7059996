// The invented state: its options checked, then the density model, units, population, group,
// votes, counties, municipalities and names, put together into the files.
// Only + - * / and sqrt touch the random draws (no exp, log or trig), so the output is the same
// on every IEEE-754 machine, not just on this one.
#include "planmill/synth/synth.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <string>
#include <utility>
#include <vector>

#include "planmill/base/error.hpp"
#include "planmill/base/random.hpp"
#include "synth/geometry.hpp"
#include "synth/model.hpp"
#include "synth/regions.hpp"
#include "synth/text_files.hpp"
#include "synth/votes.hpp"

namespace planmill {
namespace {

using namespace synth;  // the parts of the model (src/synth/*.hpp)

void check_options(const SynthOptions& options) {
  if (options.units < 16) {
    throw InputError({"", 0, "--units"},
                     "must be at least 16 (got " + std::to_string(options.units) + ")",
                     "ask for 16 or more units");
  }
  if (options.units > 1000000) {
    throw InputError({"", 0, "--units"},
                     "at most 1000000 units (got " + std::to_string(options.units) + ")",
                     "ask for fewer units");
  }
  if (options.districts < 2) {
    throw InputError({"", 0, "--districts"},
                     "must be at least 2 (got " + std::to_string(options.districts) +
                         "); a plan needs two or more districts",
                     "ask for 2 or more districts");
  }
  if (options.units < 2 * options.districts) {
    throw InputError({"", 0, "--units"},
                     "must be at least twice --districts (" + std::to_string(options.units) +
                         " units for " + std::to_string(options.districts) + " districts)",
                     "ask for more units or fewer districts");
  }
  if (options.cities > kMaxCities) {
    throw InputError(
        {"", 0, "--cities"},
        "at most " + std::to_string(kMaxCities) + " cities (got " + std::to_string(options.cities) +
            ")",
        "ask for 1 to " + std::to_string(kMaxCities) + " cities, or 0 for the default");
  }
  if (options.out_dir.empty()) {
    throw InputError({"", 0, "--out"}, "no output folder given", "name a folder with --out DIR");
  }
}

}  // namespace

SynthSummary write_synthetic_state(const SynthOptions& options) {
  check_options(options);
  const std::size_t n = options.units;
  const std::uint64_t seed = options.seed;

  Rng outline_rng = make_stream(seed, kOutlineStream);
  const synth::Outline outline = synth::make_outline(std::max<std::size_t>(4, n / 5), outline_rng);
  const double area_km2 = static_cast<double>(outline.cell_count) * synth::kCellKm * synth::kCellKm;
  Rng rural_rng = make_stream(seed, kRuralStream);
  StateModel model{make_places(outline, n, options.cities, seed),
                   {},
                   0.0,
                   synth::ValueNoise(rural_rng, outline.width_km(), outline.height_km(), 40.0)};
  model.rural_density = 0.18 * kPeoplePerUnit * static_cast<double>(n) / area_km2;
  model.clusters = make_clusters(model.places, seed);

  const std::vector<Rect> rects =
      synth::subdivide(outline, n, [&](double x, double y) { return model.density(x, y); });
  const std::vector<synth::SharedEdge> edges = synth::shared_edges(rects);
  const auto nbrs = neighbour_lists(n, edges);

  // Population: density times area, scaled to the state's total, with multiplicative noise.
  std::vector<double> density(n), expected(n);
  double expected_sum = 0.0;
  for (std::size_t u = 0; u < n; ++u) {
    density[u] = model.density(rects[u].centre_x_km(), rects[u].centre_y_km());
    expected[u] =
        density[u] * static_cast<double>(rects[u].area()) * synth::kKmPerStep * synth::kKmPerStep;
    expected_sum += expected[u];
  }
  const double scale = kPeoplePerUnit * static_cast<double>(n) / expected_sum;
  Rng pop_rng = make_stream(seed, kPopulationStream);
  std::vector<std::int64_t> pop(n);
  for (std::size_t u = 0; u < n; ++u) {
    const double factor = std::max(0.3, 1.0 + 0.12 * standard_normal(pop_rng));
    pop[u] = std::max<std::int64_t>(
        1, static_cast<std::int64_t>(std::floor(expected[u] * scale * factor + 0.5)));
  }

  Rng group_rng = make_stream(seed, kGroupNoiseStream);
  std::vector<double> group(n);
  std::vector<std::int64_t> grp(n);
  for (std::size_t u = 0; u < n; ++u) {
    const double share = model.group_share(rects[u].centre_x_km(), rects[u].centre_y_km());
    const double noisy = std::clamp(share * (0.8 + 0.4 * uniform01(group_rng)), 0.0, 0.95);
    grp[u] = static_cast<std::int64_t>(std::floor(static_cast<double>(pop[u]) * noisy + 0.5));
    group[u] = static_cast<double>(grp[u]) / static_cast<double>(pop[u]);
  }

  // Elections: a governor-type contest and a senate-type contest with lower turnout.
  Rng vote_rng = make_stream(seed, kVoteStream);
  const synth::ValueNoise gov_swing(vote_rng, outline.width_km(), outline.height_km(), 30.0);
  const synth::ValueNoise sen_swing(vote_rng, outline.width_km(), outline.height_km(), 30.0);
  const double gov_target = 0.46 + 0.05 * uniform01(vote_rng);
  const double sen_target = 0.49 + 0.05 * uniform01(vote_rng);
  std::vector<double> urban(n), gov_field(n), sen_field(n);
  std::vector<std::int64_t> gov_voters(n), sen_voters(n);
  for (std::size_t u = 0; u < n; ++u) {
    const double x = rects[u].centre_x_km(), y = rects[u].centre_y_km();
    urban[u] = density[u] / (density[u] + 800.0);
    gov_field[u] = gov_swing.at(x, y);
    sen_field[u] = sen_swing.at(x, y);
    const double turnout =
        std::clamp(0.58 - 0.12 * group[u] + 0.04 * standard_normal(vote_rng), 0.2, 0.9);
    const double midterm = std::clamp(0.88 + 0.05 * standard_normal(vote_rng), 0.6, 1.0);
    const double adults = 0.77 * static_cast<double>(pop[u]);
    gov_voters[u] = static_cast<std::int64_t>(std::floor(adults * turnout + 0.5));
    sen_voters[u] = static_cast<std::int64_t>(std::floor(adults * turnout * midterm + 0.5));
  }
  const Votes gov = vote(gov_voters, urban, group, gov_field, 0.32, 0.40, vote_rng, gov_target);
  const Votes sen = vote(sen_voters, urban, group, sen_field, 0.26, 0.45, vote_rng, sen_target);

  std::size_t county_count = 0;
  const std::vector<std::uint32_t> county = make_counties(rects, nbrs, seed, &county_count);
  const std::vector<int> town = make_municipalities(rects, nbrs, model.places);

  Rng name_rng = make_stream(seed, kNameStream);
  NameMaker names(name_rng);
  std::vector<std::string> county_names(county_count);
  for (auto& name : county_names) name = names.make(false);
  std::vector<std::string> place_names(model.places.size());
  for (auto& name : place_names) name = names.make(true);

  // Unit table, adjacency, GeoJSON and job file, built in memory and then written.
  std::vector<std::int64_t> shared(n, 0);
  for (const auto& e : edges) shared[e.a] += e.length, shared[e.b] += e.length;
  std::string units_csv =
      "unit,county,town,pop,area,perimeter,outer,x,y,grp,gov_a,gov_b,sen_a,sen_b\n";
  std::string geojson = "{\"type\":\"FeatureCollection\",\"features\":[\n";
  SynthSummary summary;
  std::vector<char> place_used(model.places.size(), 0);
  for (std::size_t u = 0; u < n; ++u) {
    const Rect& r = rects[u];
    const std::string id = unit_id(u, n);
    const std::string town_name = town[u] >= 0 ? place_names[town[u]] : std::string();
    if (town[u] >= 0) place_used[town[u]] = 1;
    units_csv += id + "," + county_names[county[u]] + "," + town_name + "," +
                 std::to_string(pop[u]) + "," + format_km2(r.area()) + "," +
                 format_km(r.perimeter()) + "," + format_km(r.perimeter() - shared[u]) + "," +
                 format_double(r.centre_x_km()) + "," + format_double(r.centre_y_km()) + "," +
                 std::to_string(grp[u]) + "," + std::to_string(gov.a[u]) + "," +
                 std::to_string(gov.b[u]) + "," + std::to_string(sen.a[u]) + "," +
                 std::to_string(sen.b[u]) + "\n";
    const std::string x0 = format_km(r.x0), x1 = format_km(r.x1);
    const std::string y0 = format_km(r.y0), y1 = format_km(r.y1);
    geojson += "{\"type\":\"Feature\",\"properties\":{\"unit\":\"" + id + "\",\"county\":\"" +
               county_names[county[u]] + "\",\"town\":\"" + town_name +
               "\"},\"geometry\":{\"type\":\"Polygon\",\"coordinates\":[[[" + x0 + "," + y0 +
               "],[" + x1 + "," + y0 + "],[" + x1 + "," + y1 + "],[" + x0 + "," + y1 + "],[" + x0 +
               "," + y0 + "]]]}}" + (u + 1 < n ? ",\n" : "\n");
    summary.population += pop[u];
    summary.group_population += grp[u];
    summary.largest_unit_population = std::max(summary.largest_unit_population, pop[u]);
  }
  geojson += "]}\n";
  std::string adjacency_csv = "a,b,length\n";
  for (const auto& e : edges) {
    adjacency_csv += unit_id(e.a, n) + "," + unit_id(e.b, n) + "," + format_km(e.length) + "\n";
  }
  const std::string job_toml =
      "# Written by planmill synth --units " + std::to_string(n) + " --districts " +
      std::to_string(options.districts) + " --seed " + std::to_string(seed) +
      (options.cities != 0 ? " --cities " + std::to_string(options.cities) : std::string()) +
      "\n[map]\nunits = \"units.csv\"\nadjacency = \"adjacency.csv\"\nid = \"unit\"\n"
      "population = \"pop\"\ncounty = \"county\"\nmunicipality = \"town\"\narea = \"area\"\n"
      "perimeter = \"perimeter\"\nouter_boundary = \"outer\"\ngeometry = \"units.geojson\"\ngroups = [\"grp\"]\n"
      "[[map.elections]]\nname = \"gov\"\nparties = [\"A\", \"B\"]\n"
      "columns = [\"gov_a\", \"gov_b\"]\n"
      "[[map.elections]]\nname = \"sen\"\nparties = [\"A\", \"B\"]\n"
      "columns = [\"sen_a\", \"sen_b\"]\n"
      "[districts]\ncount = " +
      std::to_string(options.districts) + "\n[rules]\npopulation_tolerance = 0.05\n";

  const std::filesystem::path dir(options.out_dir);
  const std::vector<std::pair<std::string, std::string>> files = {{"units.csv", units_csv},
                                                                  {"adjacency.csv", adjacency_csv},
                                                                  {"units.geojson", geojson},
                                                                  {"job.toml", job_toml}};
  write_files_atomically(dir, files);

  summary.units = n;
  summary.edges = edges.size();
  summary.counties = county_count;
  for (std::size_t p = 0; p < model.places.size(); ++p) {
    if (!place_used[p]) continue;
    ++summary.municipalities;
    if (model.places[p].city) ++summary.cities;
  }
  summary.area_km2 = area_km2;
  summary.ideal_district_population =
      static_cast<double>(summary.population) / static_cast<double>(options.districts);
  summary.elections = {{"gov", gov.share_a}, {"sen", sen.share_a}};
  for (const auto& file : files) summary.files.push_back((dir / file.first).string());
  return summary;
}

}  // namespace planmill
