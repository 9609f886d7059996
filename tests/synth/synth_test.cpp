// Tests of the invented state: determinism, exact unit count, and geometry recomputed here from
// the GeoJSON rectangles by brute force (independent of the generator's sweep).
#include "planmill/synth/synth.hpp"

#include <gtest/gtest.h>
#include <toml++/toml.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <map>
#include <nlohmann/json.hpp>
#include <set>

#include "planmill/base/error.hpp"
#include "synth_support.hpp"

namespace planmill {
namespace {

using synth_test::read_bytes;
using synth_test::read_csv;
using synth_test::scratch_dir;
using synth_test::Table;
namespace fs = std::filesystem;

const char* const kFiles[] = {"units.csv", "adjacency.csv", "units.geojson", "job.toml"};

fs::path generate(std::size_t units, std::size_t districts, std::uint64_t seed,
                  const std::string& tag) {
  const fs::path dir = scratch_dir(tag);
  write_synthetic_state({units, districts, seed, dir.string()});
  return dir;
}

struct Box {
  double x0, y0, x1, y1;
};

std::vector<Box> read_boxes(const fs::path& dir, const Table& units) {
  const auto json = nlohmann::json::parse(read_bytes(dir / "units.geojson"));
  EXPECT_EQ(json["type"], "FeatureCollection");
  std::map<std::string, Box> by_id;
  for (const auto& f : json["features"]) {
    EXPECT_EQ(f["type"], "Feature");
    EXPECT_EQ(f["geometry"]["type"], "Polygon");
    const auto& ring = f["geometry"]["coordinates"][0];
    EXPECT_EQ(ring.size(), 5U);
    EXPECT_EQ(ring[0], ring[4]);  // closed ring (RFC 7946 section 3.1.6)
    double x0 = 1e300, y0 = 1e300, x1 = -1e300, y1 = -1e300;
    for (const auto& p : ring) {
      x0 = std::min(x0, p[0].get<double>()), x1 = std::max(x1, p[0].get<double>());
      y0 = std::min(y0, p[1].get<double>()), y1 = std::max(y1, p[1].get<double>());
    }
    by_id[f["properties"]["unit"].get<std::string>()] = {x0, y0, x1, y1};
  }
  std::vector<Box> boxes;
  for (const auto& row : units.rows) boxes.push_back(by_id.at(row[0]));
  return boxes;
}

double number(const std::string& text) { return std::strtod(text.c_str(), nullptr); }

TEST(Synth, SameSeedGivesIdenticalBytes) {
  const fs::path a = generate(600, 6, 11, "a"), b = generate(600, 6, 11, "b");
  for (const char* name : kFiles) {
    EXPECT_EQ(read_bytes(a / name), read_bytes(b / name)) << name;
    EXPECT_FALSE(read_bytes(a / name).empty()) << name;
  }
  fs::remove_all(a), fs::remove_all(b);
}

TEST(Synth, DifferentSeedsGiveDifferentStates) {
  const fs::path a = generate(600, 6, 11, "a"), b = generate(600, 6, 12, "b");
  for (const char* name : {"units.csv", "adjacency.csv", "units.geojson"}) {
    EXPECT_NE(read_bytes(a / name), read_bytes(b / name)) << name;
  }
  fs::remove_all(a), fs::remove_all(b);
}

TEST(Synth, WritesExactlyTheRequestedUnitCount) {
  // Counts of every residue mod 3, since quadrant splits add 3 and halvings make up the rest.
  for (std::size_t n : {16, 17, 18, 19, 20, 257, 1001, 2002}) {
    const fs::path dir = generate(n, 8, 5 + n, std::to_string(n));
    const Table units = read_csv(dir / "units.csv");
    EXPECT_EQ(units.rows.size(), n);
    std::set<std::string> ids;
    for (const auto& row : units.rows) ids.insert(row[0]);
    EXPECT_EQ(ids.size(), n) << "unit ids are unique";
    fs::remove_all(dir);
  }
}

class SynthGeometry : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_ = generate(500, 5, 2026, "geom");
    units_ = read_csv(dir_ / "units.csv");
    adjacency_ = read_csv(dir_ / "adjacency.csv");
    boxes_ = read_boxes(dir_, units_);
    for (std::size_t u = 0; u < units_.rows.size(); ++u) index_[units_.rows[u][0]] = u;
  }
  void TearDown() override { fs::remove_all(dir_); }

  fs::path dir_;
  Table units_, adjacency_;
  std::vector<Box> boxes_;
  std::map<std::string, std::size_t> index_;
};

// Length of the boundary two axis-aligned rectangles share (0 if they only touch at a corner).
double brute_force_shared(const Box& p, const Box& q) {
  const double overlap_y = std::min(p.y1, q.y1) - std::max(p.y0, q.y0);
  const double overlap_x = std::min(p.x1, q.x1) - std::max(p.x0, q.x0);
  if ((p.x1 == q.x0 || q.x1 == p.x0) && overlap_y > 0) return overlap_y;
  if ((p.y1 == q.y0 || q.y1 == p.y0) && overlap_x > 0) return overlap_x;
  return 0.0;
}

TEST_F(SynthGeometry, AdjacencyListsEachSharedBoundaryOnceWithItsLength) {
  ASSERT_EQ(adjacency_.header, (std::vector<std::string>{"a", "b", "length"}));
  std::map<std::pair<std::size_t, std::size_t>, double> listed;
  for (const auto& row : adjacency_.rows) {
    ASSERT_TRUE(index_.count(row[0]) && index_.count(row[1])) << row[0] << "," << row[1];
    const std::size_t a = index_[row[0]], b = index_[row[1]];
    EXPECT_LT(a, b) << "each pair once, first id first";
    EXPECT_GT(number(row[2]), 0.0);
    EXPECT_TRUE(listed.emplace(std::pair{a, b}, number(row[2])).second) << "duplicate pair";
  }
  std::size_t expected_pairs = 0;
  for (std::size_t a = 0; a < boxes_.size(); ++a) {
    for (std::size_t b = a + 1; b < boxes_.size(); ++b) {
      const double shared = brute_force_shared(boxes_[a], boxes_[b]);
      if (shared <= 0) continue;
      ++expected_pairs;
      const auto it = listed.find({a, b});
      ASSERT_NE(it, listed.end()) << "missing pair " << a << "," << b;
      EXPECT_EQ(it->second, shared);  // dyadic coordinates: exact in binary
    }
  }
  EXPECT_EQ(listed.size(), expected_pairs);
}

TEST_F(SynthGeometry, GraphIsConnected) {
  std::vector<std::vector<std::size_t>> nbrs(units_.rows.size());
  for (const auto& row : adjacency_.rows) {
    nbrs[index_[row[0]]].push_back(index_[row[1]]);
    nbrs[index_[row[1]]].push_back(index_[row[0]]);
  }
  std::vector<char> seen(nbrs.size(), 0);
  std::vector<std::size_t> stack{0};
  seen[0] = 1;
  std::size_t reached = 0;
  while (!stack.empty()) {
    const std::size_t u = stack.back();
    stack.pop_back();
    ++reached;
    for (std::size_t v : nbrs[u]) {
      if (!seen[v]) seen[v] = 1, stack.push_back(v);
    }
  }
  EXPECT_EQ(reached, nbrs.size());
}

TEST_F(SynthGeometry, SharedPlusOuterEqualsPerimeterAndAreasMatchPolygons) {
  std::vector<double> shared(units_.rows.size(), 0.0);
  for (const auto& row : adjacency_.rows) {
    shared[index_[row[0]]] += number(row[2]);
    shared[index_[row[1]]] += number(row[2]);
  }
  const std::size_t area = units_.column("area"), perimeter = units_.column("perimeter");
  const std::size_t outer = units_.column("outer"), x = units_.column("x"), y = units_.column("y");
  for (std::size_t u = 0; u < units_.rows.size(); ++u) {
    const auto& row = units_.rows[u];
    const Box& b = boxes_[u];
    EXPECT_EQ(number(row[area]), (b.x1 - b.x0) * (b.y1 - b.y0)) << row[0];
    EXPECT_EQ(number(row[perimeter]), 2 * ((b.x1 - b.x0) + (b.y1 - b.y0))) << row[0];
    EXPECT_EQ(shared[u] + number(row[outer]), number(row[perimeter])) << row[0];
    EXPECT_GE(number(row[outer]), 0.0);
    EXPECT_EQ(number(row[x]), 0.5 * (b.x0 + b.x1));
    EXPECT_EQ(number(row[y]), 0.5 * (b.y0 + b.y1));
  }
}

// Union of the rectangles on the grid of all their distinct coordinates: every grid cell must
// be covered at most once (no overlaps), the covered area must equal the sum of unit areas, and
// the covered region's boundary must equal the sum of the outer lengths.
TEST_F(SynthGeometry, UnitsTileAnIrregularOutline) {
  std::vector<double> xs, ys;
  for (const Box& b : boxes_) xs.insert(xs.end(), {b.x0, b.x1}), ys.insert(ys.end(), {b.y0, b.y1});
  for (auto* v : {&xs, &ys}) {
    std::sort(v->begin(), v->end());
    v->erase(std::unique(v->begin(), v->end()), v->end());
  }
  const std::size_t w = xs.size() - 1, h = ys.size() - 1;
  std::vector<int> cover(w * h, 0);
  for (const Box& b : boxes_) {
    const auto i0 = std::lower_bound(xs.begin(), xs.end(), b.x0) - xs.begin();
    const auto i1 = std::lower_bound(xs.begin(), xs.end(), b.x1) - xs.begin();
    const auto j0 = std::lower_bound(ys.begin(), ys.end(), b.y0) - ys.begin();
    const auto j1 = std::lower_bound(ys.begin(), ys.end(), b.y1) - ys.begin();
    for (auto j = j0; j < j1; ++j) {
      for (auto i = i0; i < i1; ++i) ++cover[j * w + i];
    }
  }
  double union_area = 0.0, union_boundary = 0.0;
  const auto covered = [&](std::ptrdiff_t i, std::ptrdiff_t j) {
    return i >= 0 && j >= 0 && i < static_cast<std::ptrdiff_t>(w) &&
           j < static_cast<std::ptrdiff_t>(h) && cover[j * w + i] > 0;
  };
  for (std::size_t j = 0; j < h; ++j) {
    for (std::size_t i = 0; i < w; ++i) {
      ASSERT_LE(cover[j * w + i], 1) << "rectangles overlap";
      if (!cover[j * w + i]) continue;
      const double dx = xs[i + 1] - xs[i], dy = ys[j + 1] - ys[j];
      union_area += dx * dy;
      const auto si = static_cast<std::ptrdiff_t>(i), sj = static_cast<std::ptrdiff_t>(j);
      union_boundary += (covered(si - 1, sj) ? 0 : dy) + (covered(si + 1, sj) ? 0 : dy) +
                        (covered(si, sj - 1) ? 0 : dx) + (covered(si, sj + 1) ? 0 : dx);
    }
  }
  double area_sum = 0.0, outer_sum = 0.0;
  for (const auto& row : units_.rows) {
    area_sum += number(row[units_.column("area")]);
    outer_sum += number(row[units_.column("outer")]);
  }
  EXPECT_EQ(area_sum, union_area);
  EXPECT_EQ(outer_sum, union_boundary);
  const double box_area = (xs.back() - xs.front()) * (ys.back() - ys.front());
  EXPECT_LT(union_area, 0.9 * box_area) << "the outline should not be a rectangle";
}

std::vector<std::vector<std::size_t>> neighbours(const Table& units, const Table& adjacency) {
  std::map<std::string, std::size_t> index;
  for (std::size_t u = 0; u < units.rows.size(); ++u) index[units.rows[u][0]] = u;
  std::vector<std::vector<std::size_t>> nbrs(units.rows.size());
  for (const auto& row : adjacency.rows) {
    nbrs[index[row[0]]].push_back(index[row[1]]);
    nbrs[index[row[1]]].push_back(index[row[0]]);
  }
  return nbrs;
}

// Every non-empty code of `column` forms one connected piece of the unit graph.
void expect_contiguous(const Table& units, const Table& adjacency, const std::string& column) {
  const auto nbrs = neighbours(units, adjacency);
  const std::size_t c = units.column(column);
  std::map<std::string, std::vector<std::size_t>> members;
  for (std::size_t u = 0; u < units.rows.size(); ++u) {
    if (!units.rows[u][c].empty()) members[units.rows[u][c]].push_back(u);
  }
  for (const auto& [code, list] : members) {
    std::vector<char> seen(units.rows.size(), 0);
    std::vector<std::size_t> stack{list[0]};
    seen[list[0]] = 1;
    std::size_t reached = 0;
    while (!stack.empty()) {
      const std::size_t u = stack.back();
      stack.pop_back();
      ++reached;
      for (std::size_t v : nbrs[u]) {
        if (!seen[v] && units.rows[v][c] == code) seen[v] = 1, stack.push_back(v);
      }
    }
    EXPECT_EQ(reached, list.size()) << column << " " << code << " is not contiguous";
  }
}

TEST(Synth, CountiesAndMunicipalitiesAreContiguousAndSized) {
  const fs::path dir = generate(2000, 20, 2026, "counties");
  const Table units = read_csv(dir / "units.csv"), adjacency = read_csv(dir / "adjacency.csv");
  expect_contiguous(units, adjacency, "county");
  expect_contiguous(units, adjacency, "town");
  std::map<std::string, std::size_t> county_size;
  std::size_t rural = 0;
  for (const auto& row : units.rows) {
    ++county_size[row[units.column("county")]];
    rural += row[units.column("town")].empty() ? 1 : 0;
  }
  const double mean = 2000.0 / static_cast<double>(county_size.size());
  EXPECT_GE(mean, 60.0);
  EXPECT_LE(mean, 150.0);
  std::set<std::size_t> sizes;
  for (const auto& [name, size] : county_size) sizes.insert(size);
  EXPECT_GT(sizes.size(), county_size.size() / 2) << "county sizes should vary";
  EXPECT_GT(rural, 0U);
  EXPECT_LT(rural, units.rows.size());
  fs::remove_all(dir);
}

// Counts are consistent, and party A does better in dense units and where the group lives: a
// positive rank correlation in each election (the model builds that in; the test can fail if
// the columns are mixed up or the noise swamps the signal).
TEST(Synth, CountsAreConsistentAndVotesFollowDensityAndGroup) {
  const fs::path dir = generate(2000, 20, 7, "votes");
  const Table units = read_csv(dir / "units.csv");
  const std::size_t n = units.rows.size();
  std::vector<double> density(n), group(n), gov(n), sen(n);
  for (std::size_t u = 0; u < n; ++u) {
    const auto& r = units.rows[u];
    const double pop = number(r[units.column("pop")]), grp = number(r[units.column("grp")]);
    const double ga = number(r[units.column("gov_a")]), gb = number(r[units.column("gov_b")]);
    const double sa = number(r[units.column("sen_a")]), sb = number(r[units.column("sen_b")]);
    ASSERT_GT(pop, 0);
    ASSERT_GE(grp, 0);
    ASSERT_LE(grp, pop);
    ASSERT_GE(std::min({ga, gb, sa, sb}), 0);
    ASSERT_LE(ga + gb, pop);
    ASSERT_LE(sa + sb, pop);
    density[u] = pop / number(r[units.column("area")]);
    group[u] = grp / pop;
    gov[u] = ga / std::max(1.0, ga + gb);
    sen[u] = sa / std::max(1.0, sa + sb);
  }
  const auto ranks = [](const std::vector<double>& v) {
    std::vector<std::size_t> order(v.size());
    for (std::size_t i = 0; i < v.size(); ++i) order[i] = i;
    std::sort(order.begin(), order.end(),
              [&](std::size_t a, std::size_t b) { return v[a] < v[b]; });
    std::vector<double> r(v.size());
    for (std::size_t i = 0; i < v.size(); ++i) r[order[i]] = static_cast<double>(i);
    return r;
  };
  const auto spearman = [&](const std::vector<double>& a, const std::vector<double>& b) {
    const auto ra = ranks(a), rb = ranks(b);
    const double mean = 0.5 * static_cast<double>(n - 1);
    double sab = 0, saa = 0, sbb = 0;
    for (std::size_t i = 0; i < n; ++i) {
      sab += (ra[i] - mean) * (rb[i] - mean);
      saa += (ra[i] - mean) * (ra[i] - mean);
      sbb += (rb[i] - mean) * (rb[i] - mean);
    }
    return sab / std::sqrt(saa * sbb);
  };
  // Under independence a rank correlation has sd about 1/sqrt(n-1) = 0.022 here (common
  // practice); 0.2 is about 9 sd, so these fail only if the relation is really missing.
  EXPECT_GT(spearman(density, gov), 0.2);
  EXPECT_GT(spearman(density, sen), 0.2);
  EXPECT_GT(spearman(group, gov), 0.2);
  EXPECT_GT(spearman(group, sen), 0.2);
  fs::remove_all(dir);
}

TEST(Synth, JobFileNamesTheWrittenColumns) {
  const fs::path dir = generate(300, 3, 1, "job");
  const auto job = toml::parse_file((dir / "job.toml").string());
  const Table units = read_csv(dir / "units.csv");
  const std::set<std::string> columns(units.header.begin(), units.header.end());
  for (const char* key :
       {"id", "population", "county", "municipality", "area", "perimeter", "outer_boundary"}) {
    const auto value = job["map"][key].value<std::string>();
    ASSERT_TRUE(value.has_value()) << key;
    EXPECT_TRUE(columns.count(*value)) << key << " = " << *value;
  }
  EXPECT_TRUE(columns.count(*job["map"]["groups"][0].value<std::string>()));
  const auto* elections = job["map"]["elections"].as_array();
  ASSERT_NE(elections, nullptr);
  EXPECT_EQ(elections->size(), 2U);
  for (const auto& e : *elections) {
    for (const auto& c : *e.as_table()->get("columns")->as_array()) {
      EXPECT_TRUE(columns.count(*c.value<std::string>()));
    }
  }
  EXPECT_EQ(job["districts"]["count"].value<std::int64_t>(), 3);
  EXPECT_EQ(job["rules"]["population_tolerance"].value<double>(), 0.05);
  EXPECT_EQ(*job["map"]["units"].value<std::string>(), "units.csv");
  EXPECT_EQ(*job["map"]["adjacency"].value<std::string>(), "adjacency.csv");
  fs::remove_all(dir);
}

void expect_input_error(const SynthOptions& options, const std::string& column) {
  try {
    write_synthetic_state(options);
    ADD_FAILURE() << "no error for " << column;
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().column, column) << e.what();
  }
}

TEST(Synth, RejectsBadOptionsWithoutWritingAnything) {
  const fs::path dir = scratch_dir("bad");
  expect_input_error({15, 1, 1, dir.string()}, "--units");
  expect_input_error({39, 20, 1, dir.string()}, "--units");
  expect_input_error({100, 0, 1, dir.string()}, "--districts");
  expect_input_error({100, 2, 1, ""}, "--out");
  EXPECT_FALSE(fs::exists(dir));
  // A folder below a regular file cannot be created.
  fs::create_directories(dir);
  { std::ofstream(dir / "plain") << "x"; }
  expect_input_error({100, 2, 1, (dir / "plain" / "state").string()}, "--out");
  EXPECT_EQ(std::distance(fs::directory_iterator(dir), fs::directory_iterator()), 1);
  fs::remove_all(dir);
}

TEST(Synth, DefaultStateStillMatchesTheBundledDemo) {
  // jobs/demo holds the files of `synth --units 2000 --districts 20 --seed 2026`, written before
  // the cities option existed: the default (cities = 0) must still give them byte for byte.
  const fs::path dir = generate(2000, 20, 2026, "demo");
  const fs::path demo = fs::path(PLANMILL_SOURCE_DIR) / "jobs" / "demo";
  for (const char* name : {"units.csv", "adjacency.csv", "units.geojson"}) {
    EXPECT_EQ(read_bytes(dir / name), read_bytes(demo / name)) << name;
  }
  fs::remove_all(dir);
}

TEST(Synth, CitiesOptionSetsTheNumberOfCities) {
  // 600 units pick 3 cities by default; asking for 3 must give the very same state, asking for 2
  // a different one with two cities, and the job file's first line says how it was made.
  const fs::path d = scratch_dir("default"), t = scratch_dir("three"), w = scratch_dir("two");
  SynthOptions options{600, 4, 5, d.string()};
  const SynthSummary by_default = write_synthetic_state(options);
  EXPECT_EQ(by_default.cities, 3U);
  options.cities = 3;
  options.out_dir = t.string();
  (void)write_synthetic_state(options);
  options.cities = 2;
  options.out_dir = w.string();
  const SynthSummary two = write_synthetic_state(options);
  EXPECT_EQ(two.cities, 2U);
  EXPECT_EQ(read_bytes(d / "units.csv"), read_bytes(t / "units.csv"));
  EXPECT_NE(read_bytes(d / "units.csv"), read_bytes(w / "units.csv"));
  const std::string job = read_bytes(w / "job.toml");
  EXPECT_EQ(job.substr(0, job.find('\n')),
            "# Written by planmill synth --units 600 --districts 4 --seed 5 --cities 2");
  EXPECT_EQ(read_bytes(d / "job.toml").find("--cities"), std::string::npos);
  expect_input_error({600, 4, 5, scratch_dir("seven").string(), 7}, "--cities");
  for (const fs::path& p : {d, t, w}) fs::remove_all(p);
}

TEST(Synth, CommandLineReportsBadOptionsOnOneLineWithStatus2) {
  const fs::path dir = scratch_dir("cli");
  fs::create_directories(dir);
  const std::string err = (dir / "stderr.txt").string();
  const std::string command = std::string(PLANMILL_BINARY) +
                              " synth --units 10 --districts 2 --out " + (dir / "state").string() +
                              " 2> " + err;
  const int status = std::system(command.c_str());
  ASSERT_TRUE(WIFEXITED(status));
  EXPECT_EQ(WEXITSTATUS(status), 2);
  const std::string text = read_bytes(err);
  EXPECT_NE(text.find("--units"), std::string::npos) << text;
  EXPECT_EQ(std::count(text.begin(), text.end(), '\n'), 1) << text;
  EXPECT_FALSE(fs::exists(dir / "state"));

  const std::string ok = std::string(PLANMILL_BINARY) +
                         " synth --units 64 --districts 4 --seed 3 --out " +
                         (dir / "state").string() + " > " + (dir / "out.txt").string();
  EXPECT_EQ(std::system(ok.c_str()), 0);
  for (const char* name : kFiles) EXPECT_TRUE(fs::exists(dir / "state" / name)) << name;
  fs::remove_all(dir);
}

}  // namespace
}  // namespace planmill
