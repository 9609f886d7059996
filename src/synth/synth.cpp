// The invented state: density model, cities, towns, counties, group, votes, and the files.
// Only + - * / and sqrt touch the random draws (no exp, log or trig), so the output is the same
// on every IEEE-754 machine, not just on this one.
#include "planmill/synth/synth.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <queue>
#include <set>
#include <stdexcept>
#include <system_error>

#include "planmill/base/error.hpp"
#include "planmill/base/random.hpp"
#include "synth/geometry.hpp"

namespace planmill {
namespace {

using synth::Rect;

// One stream per part of the model, so a change in one part leaves the others' draws alone.
enum StreamKey : std::uint64_t {
  kOutlineStream = 1,
  kCityStream,
  kTownStream,
  kRuralStream,
  kPopulationStream,
  kCountyStream,
  kGroupStream,
  kVoteStream,
  kNameStream,
  kGroupNoiseStream,
};

constexpr double kPeoplePerUnit = 1000.0;  // the state's mean population per unit
constexpr std::size_t kMaxCities = 6;      // the default state has 3 to 6

// Approximately standard normal: sum of 12 uniforms minus 6 (Irwin-Hall), common practice.
double standard_normal(Rng& rng) {
  double sum = 0.0;
  for (int i = 0; i < 12; ++i) sum += uniform01(rng);
  return sum - 6.0;
}

// Rational bump: 1 at the centre, 1/4 at distance s, integrates to pi s^2 over the plane.
double bump(double dx, double dy, double s) {
  const double q = 1.0 + (dx * dx + dy * dy) / (s * s);
  return 1.0 / (q * q);
}

struct Place {
  double x = 0.0, y = 0.0;  // km
  double core_peak = 0.0, core_radius = 0.0;
  double suburb_peak = 0.0, suburb_radius = 0.0;
  double limit_radius = 0.0;  // units whose centre is closer belong to the municipality
  bool city = false;
  std::string name;
};

struct Cluster {
  double x = 0.0, y = 0.0, radius = 0.0, strength = 0.0;
};

// Invented one-word names; a set keeps them unique (only looked up, never iterated for output).
class NameMaker {
 public:
  explicit NameMaker(Rng& rng) : rng_(rng) {}
  std::string make(bool town) {
    static const char* const kHeads[] = {"Ash", "Bel", "Cor", "Dun", "El",  "Fen", "Gar", "Hal",
                                         "Ir",  "Kel", "Lor", "Mar", "Nor", "Or",  "Pel", "Quin",
                                         "Ros", "Sal", "Tor", "Ul",  "Val", "Wen", "Yar", "Zel"};
    static const char* const kMiddles[] = {"", "a", "e", "i", "o", "en", "ar", "is"};
    static const char* const kCountyTails[] = {"ford",  "ton",  "by",    "dale", "mere",  "wick",
                                               "stead", "holm", "ridge", "moor", "field", "crest"};
    static const char* const kTownTails[] = {"haven",  "burg",  "port", "minster",
                                             "bridge", "mouth", "gate", "vale"};
    // Finite: from attempt 41 on the name ends in the number of names so far, which no earlier
    // name can end in, so that attempt succeeds.
    for (int attempt = 0;; ++attempt) {
      std::string name = kHeads[uniform_below(rng_, 24)];
      name += kMiddles[uniform_below(rng_, 8)];
      name += town ? kTownTails[uniform_below(rng_, 8)] : kCountyTails[uniform_below(rng_, 12)];
      if (attempt > 40) name += std::to_string(used_.size());
      if (used_.insert(name).second) return name;
    }
  }

 private:
  Rng& rng_;
  std::set<std::string> used_;
};

double distance_squared(double ax, double ay, double bx, double by) {
  return (ax - bx) * (ax - bx) + (ay - by) * (ay - by);
}

// A random point inside a random outline cell.
// Rejection from the bounding grid, bounded: after width * height misses, the j-th inside cell for
// a uniform j (still uniform over inside cells; the outline has at least one).
std::pair<double, double> random_inland_point(const synth::Outline& outline, Rng& rng) {
  const std::size_t cells = outline.width * outline.height;
  std::size_t cell = cells;
  for (std::size_t miss = 0; miss < cells && cell == cells; ++miss) {
    const std::uint32_t x = uniform_below(rng, static_cast<std::uint32_t>(outline.width));
    const std::uint32_t y = uniform_below(rng, static_cast<std::uint32_t>(outline.height));
    if (outline.inside[y * outline.width + x]) cell = y * outline.width + x;
  }
  if (cell == cells) {
    std::uint32_t j = uniform_below(rng, static_cast<std::uint32_t>(outline.cell_count));
    for (cell = 0; cell + 1 < cells; ++cell)
      if (outline.inside[cell] && j-- == 0) break;
  }
  const std::size_t x = cell % outline.width, y = cell / outline.width;
  return {(static_cast<double>(x) + 0.1 + 0.8 * uniform01(rng)) * synth::kCellKm,
          (static_cast<double>(y) + 0.1 + 0.8 * uniform01(rng)) * synth::kCellKm};
}

std::vector<Place> make_places(const synth::Outline& outline, std::size_t units, std::size_t cities,
                               std::uint64_t seed) {
  const double people = kPeoplePerUnit * static_cast<double>(units);
  const double span = std::sqrt(static_cast<double>(outline.cell_count)) * synth::kCellKm;
  std::vector<Place> places;
  // Cities: a few, of Zipf-like sizes with noise, spread apart.
  Rng rng = make_stream(seed, kCityStream);
  const std::size_t city_count =
      cities != 0 ? cities : std::min<std::size_t>(kMaxCities, 3 + units / 3000);
  std::vector<double> weight(city_count);
  double weight_sum = 0.0;
  for (std::size_t i = 0; i < city_count; ++i) {
    weight[i] = (0.75 + 0.5 * uniform01(rng)) / static_cast<double>(i + 1);
    weight_sum += weight[i];
  }
  for (std::size_t i = 0; i < city_count; ++i) {
    Place city;
    city.city = true;
    double min_gap = 0.35 * span;
    // Finite: the gap shrinks by a fifth every 50 attempts and reaches 0 (underflow) within a few
    // hundred thousand, and every point is then far enough.
    for (int attempt = 0;; ++attempt) {
      if (attempt % 50 == 49) min_gap *= 0.8;
      std::tie(city.x, city.y) = random_inland_point(outline, rng);
      bool far = true;
      for (const Place& other : places) {
        far = far && distance_squared(city.x, city.y, other.x, other.y) >= min_gap * min_gap;
      }
      if (far) break;
    }
    const double mass = 0.72 * people * weight[i] / weight_sum;
    city.core_peak = 2500.0 + 3000.0 * uniform01(rng);
    city.core_radius = std::sqrt(0.6 * mass / (std::numbers::pi * city.core_peak));
    city.suburb_radius = (3.0 + 1.5 * uniform01(rng)) * city.core_radius;
    city.suburb_peak = 0.4 * mass / (std::numbers::pi * city.suburb_radius * city.suburb_radius);
    city.limit_radius = 1.5 * city.core_radius;
    places.push_back(city);
  }
  // Towns: many small places in the countryside and the outer suburbs.
  rng = make_stream(seed, kTownStream);
  const std::size_t town_count = std::max<std::size_t>(2, units / 160);
  const double town_people = 0.10 * people / static_cast<double>(town_count);
  for (std::size_t i = 0; i < town_count; ++i) {
    Place town;
    town.core_peak = 1200.0 + 800.0 * uniform01(rng);
    town.core_radius =
        std::sqrt(town_people * (0.4 + 1.2 * uniform01(rng)) / (std::numbers::pi * town.core_peak));
    town.limit_radius = 1.8 * town.core_radius;
    for (int attempt = 0; attempt < 200; ++attempt) {
      std::tie(town.x, town.y) = random_inland_point(outline, rng);
      bool clear = true;
      for (const Place& other : places) {
        const double gap =
            other.city ? 1.3 * other.limit_radius : 2.5 * (other.limit_radius + town.limit_radius);
        clear = clear && distance_squared(town.x, town.y, other.x, other.y) >= gap * gap;
      }
      if (clear) break;
    }
    places.push_back(town);
  }
  return places;
}

struct StateModel {
  std::vector<Place> places;
  std::vector<Cluster> clusters;
  double rural_density = 0.0;  // people per km^2 before the rural noise
  synth::ValueNoise rural_noise;

  [[nodiscard]] double density(double x, double y) const {
    const double farm = rural_noise.at(x, y);
    double d = rural_density * (0.2 + 2.4 * farm * farm);
    for (const Place& p : places) {
      d += p.core_peak * bump(x - p.x, y - p.y, p.core_radius);
      if (p.suburb_radius > 0.0) d += p.suburb_peak * bump(x - p.x, y - p.y, p.suburb_radius);
    }
    return d;
  }
  [[nodiscard]] double group_share(double x, double y) const {
    double share = 0.025;
    for (const Cluster& c : clusters) share += c.strength * bump(x - c.x, y - c.y, c.radius);
    return std::min(share, 0.9);
  }
};

std::vector<Cluster> make_clusters(const std::vector<Place>& places, std::uint64_t seed) {
  Rng rng = make_stream(seed, kGroupStream);
  std::vector<Cluster> clusters;
  for (const Place& city : places) {
    if (!city.city) continue;
    const int count = uniform01(rng) < 0.6 ? 2 : 1;
    for (int i = 0; i < count; ++i) {
      // A point of the unit disc by rejection (each round hits with chance pi/4); bounded at 64
      // rounds, after which the centre is used (chance about 1e-43).
      double dx = 0.0, dy = 0.0;
      for (int round = 0; round < 64; ++round) {
        dx = 2.0 * uniform01(rng) - 1.0;
        dy = 2.0 * uniform01(rng) - 1.0;
        if (dx * dx + dy * dy <= 1.0) break;
        dx = dy = 0.0;
      }
      const double reach = 0.9 * city.core_radius;
      clusters.push_back({city.x + reach * dx, city.y + reach * dy,
                          (0.5 + 0.5 * uniform01(rng)) * city.core_radius,
                          0.55 + 0.3 * uniform01(rng)});
    }
  }
  return clusters;
}

// Neighbour lists from the shared edges (each unit's list in increasing order).
std::vector<std::vector<std::uint32_t>> neighbour_lists(std::size_t n,
                                                        const std::vector<synth::SharedEdge>& e) {
  std::vector<std::vector<std::uint32_t>> nbrs(n);
  for (const auto& edge : e) {
    nbrs[edge.a].push_back(edge.b);
    nbrs[edge.b].push_back(edge.a);
  }
  for (auto& list : nbrs) std::sort(list.begin(), list.end());
  return nbrs;
}

// Counties: seeds spread evenly over the units, then grown in turn (the county furthest below
// its target size takes the frontier unit nearest its seed), so each county is contiguous.
std::vector<std::uint32_t> make_counties(const std::vector<Rect>& rects,
                                         const std::vector<std::vector<std::uint32_t>>& nbrs,
                                         std::uint64_t seed, std::size_t* county_count) {
  const std::size_t n = rects.size();
  Rng rng = make_stream(seed, kCountyStream);
  const std::size_t count = std::max<std::size_t>(1, (n + 50) / 100);
  std::vector<double> target(count);
  double target_sum = 0.0;
  for (double& t : target) target_sum += (t = 60.0 + 90.0 * uniform01(rng));
  for (double& t : target) t *= static_cast<double>(n) / target_sum;

  // Best-candidate seeds; distance counted in unit widths so dense cities get more seeds.
  std::vector<std::uint32_t> seeds;
  std::vector<double> nearest(n, 1e300);
  for (std::size_t c = 0; c < count; ++c) {
    std::uint32_t best = 0;
    double best_score = -1.0;
    for (int candidate = 0; candidate < 12; ++candidate) {
      const std::uint32_t u = uniform_below(rng, static_cast<std::uint32_t>(n));
      const double score = nearest[u];
      if (score > best_score && std::find(seeds.begin(), seeds.end(), u) == seeds.end()) {
        best = u, best_score = score;
      }
    }
    if (best_score < 0.0) {  // every candidate was already a seed: take the first free unit
      while (std::find(seeds.begin(), seeds.end(), best) != seeds.end()) ++best;
    }
    seeds.push_back(best);
    const double sx = rects[best].centre_x_km(), sy = rects[best].centre_y_km();
    for (std::size_t u = 0; u < n; ++u) {
      const double width = std::sqrt(static_cast<double>(rects[u].area())) * synth::kKmPerStep;
      const double d = distance_squared(sx, sy, rects[u].centre_x_km(), rects[u].centre_y_km());
      nearest[u] = std::min(nearest[u], d / (width * width));
    }
  }

  constexpr std::uint32_t kUnassigned = 0xFFFFFFFFU;
  std::vector<std::uint32_t> county(n, kUnassigned);
  using Candidate = std::pair<double, std::uint32_t>;  // (distance^2 to seed, unit)
  std::vector<std::priority_queue<Candidate, std::vector<Candidate>, std::greater<>>> frontier(
      count);
  std::vector<std::size_t> size(count, 0);
  using Turn = std::pair<double, std::uint32_t>;  // (size / target, county)
  std::priority_queue<Turn, std::vector<Turn>, std::greater<>> turns;
  const auto offer = [&](std::uint32_t c, std::uint32_t u) {
    const Rect& s = rects[seeds[c]];
    frontier[c].push({distance_squared(s.centre_x_km(), s.centre_y_km(), rects[u].centre_x_km(),
                                       rects[u].centre_y_km()),
                      u});
  };
  const auto assign = [&](std::uint32_t c, std::uint32_t u) {
    county[u] = c;
    ++size[c];
    for (std::uint32_t v : nbrs[u]) {
      if (county[v] == kUnassigned) offer(c, v);
    }
  };
  for (std::uint32_t c = 0; c < count; ++c) assign(c, seeds[c]);
  for (std::uint32_t c = 0; c < count; ++c) turns.push({1.0 / target[c], c});
  while (!turns.empty()) {
    const std::uint32_t c = turns.top().second;
    turns.pop();
    while (!frontier[c].empty() && county[frontier[c].top().second] != kUnassigned) {
      frontier[c].pop();
    }
    if (frontier[c].empty()) continue;  // surrounded: this county is finished
    const std::uint32_t u = frontier[c].top().second;
    frontier[c].pop();
    assign(c, u);
    turns.push({static_cast<double>(size[c]) / target[c], c});
  }
  *county_count = count;
  return county;
}

// Municipality of each unit (index into places, or -1): units whose centre lies within a place's
// limit, nearest place relative to its limit, kept only if connected to the unit at its centre.
std::vector<int> make_municipalities(const std::vector<Rect>& rects,
                                     const std::vector<std::vector<std::uint32_t>>& nbrs,
                                     const std::vector<Place>& places) {
  const std::size_t n = rects.size();
  std::vector<int> claim(n, -1);
  std::vector<double> closeness(n, 1.0);
  for (std::size_t p = 0; p < places.size(); ++p) {
    const double limit2 = places[p].limit_radius * places[p].limit_radius;
    for (std::size_t u = 0; u < n; ++u) {
      const double relative = distance_squared(places[p].x, places[p].y, rects[u].centre_x_km(),
                                               rects[u].centre_y_km()) /
                              limit2;
      if (relative < closeness[u]) closeness[u] = relative, claim[u] = static_cast<int>(p);
    }
  }
  std::vector<int> result(n, -1);
  std::vector<std::uint32_t> stack;
  for (std::size_t p = 0; p < places.size(); ++p) {
    const auto px = static_cast<std::int64_t>(places[p].x / synth::kKmPerStep);
    const auto py = static_cast<std::int64_t>(places[p].y / synth::kKmPerStep);
    std::uint32_t centre = 0;
    bool found = false;
    for (std::uint32_t u = 0; u < n && !found; ++u) {
      const Rect& r = rects[u];
      if (r.x0 <= px && px < r.x1 && r.y0 <= py && py < r.y1) centre = u, found = true;
    }
    if (!found || (claim[centre] != -1 && claim[centre] != static_cast<int>(p))) continue;
    const int label = static_cast<int>(p);
    result[centre] = label;
    stack.assign(1, centre);
    while (!stack.empty()) {
      const std::uint32_t u = stack.back();
      stack.pop_back();
      for (std::uint32_t v : nbrs[u]) {
        if (claim[v] == label && result[v] == -1) result[v] = label, stack.push_back(v);
      }
    }
  }
  return result;
}

std::string format_double(double value) {
  char buffer[64];
  const auto [end, ec] =
      std::to_chars(buffer, buffer + sizeof buffer, value, std::chars_format::fixed);
  if (ec != std::errc()) throw std::logic_error("synth: number formatting failed");
  return std::string(buffer, end);
}

std::string format_km(std::int64_t steps) {
  return format_double(static_cast<double>(steps) * synth::kKmPerStep);
}

std::string format_km2(std::int64_t steps2) {
  return format_double(static_cast<double>(steps2) * synth::kKmPerStep * synth::kKmPerStep);
}

struct Votes {
  std::vector<std::int64_t> a, b;
  double share_a = 0.0;
};

// Party A's share rises with density and with the group's share; a regional swing field and
// per-unit noise vary it. The intercept is set by bisection so the statewide share hits target.
Votes vote(const std::vector<std::int64_t>& voters, const std::vector<double>& urban,
           const std::vector<double>& group, const std::vector<double>& swing, double urban_pull,
           double group_pull, Rng& rng, double target) {
  const std::size_t n = voters.size();
  std::vector<double> noise(n);
  for (double& z : noise) z = 0.035 * standard_normal(rng);
  const auto share = [&](double intercept, std::size_t u) {
    const double s = intercept + urban_pull * urban[u] + group_pull * group[u] +
                     0.12 * (swing[u] - 0.5) + noise[u];
    return std::clamp(s, 0.04, 0.96);
  };
  const auto statewide = [&](double intercept) {
    double a = 0.0, total = 0.0;
    for (std::size_t u = 0; u < n; ++u) {
      a += static_cast<double>(voters[u]) * share(intercept, u);
      total += static_cast<double>(voters[u]);
    }
    return total > 0.0 ? a / total : 0.5;
  };
  double low = -1.0, high = 1.0;
  for (int iteration = 0; iteration < 60; ++iteration) {
    const double mid = 0.5 * (low + high);
    (statewide(mid) < target ? low : high) = mid;
  }
  Votes votes;
  votes.a.resize(n);
  votes.b.resize(n);
  std::int64_t sum_a = 0, sum_all = 0;
  for (std::size_t u = 0; u < n; ++u) {
    votes.a[u] =
        static_cast<std::int64_t>(std::floor(static_cast<double>(voters[u]) * share(low, u) + 0.5));
    votes.b[u] = voters[u] - votes.a[u];
    sum_a += votes.a[u];
    sum_all += voters[u];
  }
  votes.share_a = sum_all > 0 ? static_cast<double>(sum_a) / static_cast<double>(sum_all) : 0.0;
  return votes;
}

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

// Writes every file to a temporary name first and renames them only when all are complete.
void write_files_atomically(const std::filesystem::path& dir,
                            const std::vector<std::pair<std::string, std::string>>& files) {
  namespace fs = std::filesystem;
  std::error_code ec;
  fs::create_directories(dir, ec);
  if (ec || !fs::is_directory(dir)) {
    throw InputError({dir.string(), 0, "--out"}, "cannot create the output folder",
                     "choose a folder you can write to");
  }
  std::vector<fs::path> temps;
  const auto discard = [&] {
    for (const fs::path& t : temps) fs::remove(t, ec);
  };
  for (const auto& [name, text] : files) {
    const fs::path temp = dir / ("." + name + ".synth-tmp");
    temps.push_back(temp);
    std::ofstream out(temp, std::ios::binary | std::ios::trunc);
    out.write(text.data(), static_cast<std::streamsize>(text.size()));
    out.close();
    if (!out) {
      discard();
      throw InputError({(dir / name).string(), 0, "--out"}, "cannot write the file",
                       "choose a folder you can write to, with free space");
    }
  }
  for (std::size_t i = 0; i < files.size(); ++i) {
    fs::rename(temps[i], dir / files[i].first, ec);
    if (ec) {
      discard();
      throw InputError({(dir / files[i].first).string(), 0, "--out"},
                       "cannot move the finished file into place: " + ec.message(),
                       "choose a folder you can write to");
    }
  }
}

std::string unit_id(std::size_t u, std::size_t n) {
  std::string digits = std::to_string(u + 1);
  const std::size_t width = std::max<std::size_t>(5, std::to_string(n).size());
  return "u" + std::string(width - digits.size(), '0') + digits;
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
      "perimeter = \"perimeter\"\nouter_boundary = \"outer\"\ngroups = [\"grp\"]\n"
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
