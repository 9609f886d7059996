// ingest_map: read the layer, find the neighbours, make the map one connected piece (or say why
// it is not), and write the three files together.
#include <sys/types.h>
#include <unistd.h>

#include <algorithm>
#include <charconv>
#include <filesystem>
#include <limits>
#include <unordered_map>
#include <numeric>

#include "ingest/layer.hpp"
#include "planmill/io/number_text.hpp"
#include "planmill/base/error.hpp"
#include "planmill/io/atomic_file.hpp"
#include "planmill/io/csv.hpp"
#include "planmill/io/fields.hpp"

namespace planmill {
namespace {

using ingest::Edge;
using ingest::Layer;

// The connected parts of the map, largest first (ties: the part holding the lowest unit).
std::vector<std::vector<std::size_t>> parts_of(std::size_t n, const std::vector<Edge>& edges) {
  std::vector<std::size_t> root(n);
  std::iota(root.begin(), root.end(), 0);
  const auto find = [&](std::size_t x) {
    while (root[x] != x) x = root[x] = root[root[x]];
    return x;
  };
  for (const Edge& e : edges) root[find(e.a)] = find(e.b);
  std::vector<std::vector<std::size_t>> by_root(n);
  for (std::size_t u = 0; u < n; ++u) by_root[find(u)].push_back(u);
  std::vector<std::vector<std::size_t>> parts;
  for (auto& p : by_root) {
    if (!p.empty()) parts.push_back(std::move(p));
  }
  std::stable_sort(parts.begin(), parts.end(), [](const auto& x, const auto& y) {
    return x.size() != y.size() ? x.size() > y.size() : x.front() < y.front();
  });
  return parts;
}

void add_edge(std::vector<Edge>& edges, std::size_t a, std::size_t b, double length) {
  if (a > b) std::swap(a, b);
  for (const Edge& e : edges) {
    if (e.a == a && e.b == b) return;
  }
  edges.push_back({a, b, length});
}

void add_bridges(const Layer& layer, const IngestOptions& o, std::vector<Edge>& edges) {
  const CsvTable table = read_csv_file(o.bridges);
  std::unordered_map<std::string, std::size_t> index;
  for (std::size_t i = 0; i < layer.units.size(); ++i) index.emplace(layer.units[i].id, i);
  for (std::size_t r = 0; r < table.rows.size(); ++r) {
    const auto& row = table.rows[r].fields;
    const std::size_t line = table.rows[r].line;
    if (row.size() < 2) throw InputError({o.bridges, line, ""}, "a bridge needs two unit ids", "write id,id on each line");
    std::size_t ends[2];
    for (int k = 0; k < 2; ++k) {
      const auto it = index.find(row[static_cast<std::size_t>(k)]);
      if (it == index.end()) {
        throw InputError({o.bridges, line, table.header[static_cast<std::size_t>(k)]}, "unit '" + row[static_cast<std::size_t>(k)] + "' is not in the map",
                         "use ids of the --id attribute");
      }
      ends[k] = it->second;
    }
    if (ends[0] == ends[1]) throw InputError({o.bridges, line, ""}, "a unit cannot be bridged to itself", "name two different units");
    add_edge(edges, ends[0], ends[1], 0);
  }
}

// Joins the smallest part to the unit nearest to it outside the part, until one part is left.
void join_islands(const Layer& layer, std::vector<Edge>& edges, std::vector<std::string>& notes) {
  for (auto parts = parts_of(layer.units.size(), edges); parts.size() > 1; parts = parts_of(layer.units.size(), edges)) {
    const std::vector<std::size_t>& island = parts.back();
    std::vector<char> inside(layer.units.size(), 0);
    for (std::size_t u : island) inside[u] = 1;
    double best = std::numeric_limits<double>::infinity();
    std::size_t from = 0, to = 0;
    for (std::size_t u : island) {
      const ingest::Box& a = layer.units[u].box;
      for (std::size_t v = 0; v < layer.units.size(); ++v) {
        if (inside[v]) continue;
        const ingest::Box& b = layer.units[v].box;
        const double dx = std::max({0.0, a.min_x - b.max_x, b.min_x - a.max_x}), dy = std::max({0.0, a.min_y - b.max_y, b.min_y - a.max_y});
        if (std::hypot(dx, dy) >= best) continue;
        const double d = layer.units[u].shape->Distance(layer.units[v].shape.get());
        if (d < best) best = d, from = u, to = v;
      }
    }
    add_edge(edges, from, to, 0);
    notes.push_back("joined a separate part of " + std::to_string(island.size()) + " unit(s) at '" + layer.units[from].id + "' to its nearest unit '" +
                    layer.units[to].id + "' (" + number_text(best) + " map units apart)");
  }
}

std::string describe_parts(const Layer& layer, const std::vector<std::vector<std::size_t>>& parts, const std::vector<double>& population) {
  std::string text;
  for (std::size_t p = 1; p < parts.size() && p <= 5; ++p) {
    double people = 0;
    for (std::size_t u : parts[p]) people += population.empty() ? 0 : population[u];
    text += (p > 1 ? "; " : "") + std::to_string(parts[p].size()) + " unit(s)" + (population.empty() ? "" : ", population " + number_text(people)) +
            ", e.g. '" + layer.units[parts[p].front()].id + "'";
  }
  return text + (parts.size() > 6 ? "; ..." : "");
}

std::string toml_string(const std::string& s) {
  std::string out = "\"";
  for (char c : s) {
    if (c == '"' || c == '\\') out += '\\';
    out += c;
  }
  return out + "\"";
}

std::string job_text(const Layer& layer, const IngestOptions& o) {
  std::string t = "# Written by planmill ingest from " + o.map_path + "; areas and lengths are " + layer.metric.description() + ".\n";
  t += "[map]\nunits = \"units.csv\"\nadjacency = \"adjacency.csv\"\nid = " + toml_string(o.id_field) + "\n";
  t += o.population.empty() ? "# population = \"\"   # required: the population column (see units.csv), then remove the '#'\n"
                            : "population = " + toml_string(o.population) + "\n";
  if (!o.county.empty()) t += "county = " + toml_string(o.county) + "\n";
  if (!o.municipality.empty()) t += "municipality = " + toml_string(o.municipality) + "\n";
  t += "area = \"area\"\nperimeter = \"perimeter\"\nouter_boundary = \"outer\"\n";
  if (!o.keep.empty()) {
    t += "# groups = []        # count columns among the kept ones:";
    for (const std::string& k : o.keep) t += " " + k;
    t += "\n";
  }
  t += "\n[districts]\n# count = 2          # required: the number of districts, then remove the '#'\n";
  t += "\n[rules]\npopulation_tolerance = 0.05\n";
  return t;
}

}  // namespace

IngestSummary ingest_map(const IngestOptions& o) {
  Layer layer = ingest::read_layer(o);
  IngestSummary summary;
  summary.notes = layer.notes;
  summary.measure = layer.metric.description();
  std::vector<double> population;
  if (!o.population.empty()) {
    const std::size_t column = static_cast<std::size_t>(std::find(layer.columns.begin(), layer.columns.end(), o.population) - layer.columns.begin());
    std::size_t zero = 0;
    std::string zero_ids;
    for (const ingest::LayerUnit& u : layer.units) {
      const io::ParsedNumber n = io::parse_number(u.values[column]);
      if (n.status != io::NumberStatus::ok || n.value < 0) {
        throw InputError({o.map_path, 0, o.population}, "unit '" + u.id + "' (feature " + std::to_string(u.feature) + ") has population '" + u.values[column] +
                         "', not a number of 0 or more", "fix the attribute, or name the population column with --population");
      }
      population.push_back(n.value);
      if (n.value == 0 && zero++ < 5) zero_ids += (zero > 1 ? ", '" : "'") + u.id + "'";
    }
    if (zero) summary.notes.push_back(std::to_string(zero) + " unit(s) have population 0: " + zero_ids + (zero > 5 ? ", ..." : ""));
  }
  std::vector<Edge> edges = ingest::find_adjacency(layer, o, summary.notes);
  if (!o.bridges.empty()) add_bridges(layer, o, edges);
  if (o.join_islands) join_islands(layer, edges, summary.notes);
  const auto parts = parts_of(layer.units.size(), edges);
  if (parts.size() > 1) {
    throw InputError({o.map_path, 0, ""}, "the map falls into " + std::to_string(parts.size()) + " separate parts; besides the largest (" +
                     std::to_string(parts.front().size()) + " units): " + describe_parts(layer, parts, population),
                     "list the links that exist on the ground (ferries, bridges) as id,id rows in a --bridges CSV, or pass --join-islands");
  }
  std::vector<double> shared(layer.units.size(), 0);
  for (const Edge& e : edges) shared[e.a] += e.length, shared[e.b] += e.length;
  // Units are written in unit order; edges name their ends by position in it, lower first.
  const std::vector<std::size_t> order = ingest::unit_order(layer, o.source_order);
  std::vector<std::size_t> position(order.size());
  for (std::size_t i = 0; i < order.size(); ++i) position[order[i]] = i;
  for (Edge& e : edges) {
    const std::size_t a = position[e.a], b = position[e.b];
    e.a = std::min(a, b), e.b = std::max(a, b);
  }
  std::sort(edges.begin(), edges.end(), [](const Edge& x, const Edge& y) { return x.a != y.a ? x.a < y.a : x.b < y.b; });
  std::string units = csv_field(o.id_field);
  for (const std::string& c : layer.columns) units += "," + csv_field(c);
  units += ",area,perimeter,outer,feature\n";
  for (const std::size_t i : order) {
    const ingest::LayerUnit& u = layer.units[i];
    units += csv_field(u.id);
    for (const std::string& v : u.values) units += "," + csv_field(v);
    units += "," + number_text(u.area) + "," + number_text(u.perimeter) + "," + number_text(std::max(0.0, u.perimeter - shared[i])) + "," +
             std::to_string(u.feature) + "\n";
  }
  std::string adjacency = "a,b,length\n";
  for (const Edge& e : edges) {
    adjacency += csv_field(layer.units[order[e.a]].id) + "," + csv_field(layer.units[order[e.b]].id) + "," + number_text(e.length) + "\n";
  }

  // Staged in a hidden folder inside the output folder, moved into place only when all are written.
  namespace fs = std::filesystem;
  std::error_code ec;
  fs::create_directories(o.out_dir, ec);
  const fs::path out(o.out_dir);
  struct Staging {
    fs::path dir;
    ~Staging() {
      std::error_code ignored;
      fs::remove_all(dir, ignored);
    }
  } staging{out / (".ingest-partial-" + std::to_string(::getpid()))};
  fs::create_directories(staging.dir, ec);
  if (!fs::is_directory(staging.dir)) {
    throw OutputError(staging.dir.string() + ": cannot create a folder (" + ec.message() + "); check that " + o.out_dir + " is writable");
  }
  const std::pair<const char*, const std::string*> files[] = {{"units.csv", &units}, {"adjacency.csv", &adjacency}};
  const std::string job = job_text(layer, o);
  for (const auto& [name, text] : files) write_file_atomically((staging.dir / name).string(), *text);
  write_file_atomically((staging.dir / "job.toml").string(), job);
  for (const char* name : {"units.csv", "adjacency.csv", "job.toml"}) {
    fs::rename(staging.dir / name, out / name, ec);
    if (ec) throw OutputError((out / name).string() + ": cannot move the finished file into place (" + ec.message() + ")");
    summary.written.emplace_back(name);
  }
  summary.units = layer.units.size();
  summary.edges = edges.size();
  return summary;
}

}  // namespace planmill
