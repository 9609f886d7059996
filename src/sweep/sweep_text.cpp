// The comparison as text: settings and verdicts, then one table per axis block.
#include <algorithm>
#include <iomanip>
#include <map>
#include <ostream>

#include "planmill/report/svg.hpp"
#include "sweep/blocks.hpp"

namespace planmill::sweep {

namespace blocks {

std::vector<AxisBlock> axis_blocks(const SweepComparison& c) {
  const auto& keys = c.folder.keys;
  const auto& values = c.folder.axis_values;
  std::vector<std::size_t> varied;
  for (std::size_t a = 0; a < keys.size(); ++a)
    if (values[a].size() > 1) varied.push_back(a);
  std::vector<AxisBlock> out;
  if (varied.empty()) {
    AxisBlock b;
    for (const SettingSummary& s : c.settings) b.columns.push_back(&s);
    out.push_back(std::move(b));
    return out;
  }
  for (const std::size_t a : varied) {
    std::map<std::vector<std::string>, AxisBlock> by_held;  // the other axes' values -> block
    std::vector<std::vector<std::string>> order;
    for (const SettingSummary& s : c.settings) {
      std::vector<std::string> held = s.setting.values;
      held[a] = "*";
      auto [it, fresh] = by_held.try_emplace(held);
      AxisBlock& b = it->second;
      if (fresh) {
        order.push_back(held);
        b.axis = a;
        b.columns.assign(values[a].size(), nullptr);
        for (const std::size_t o : varied)
          if (o != a) b.held += (b.held.empty() ? "" : ", ") + keys[o] + " = " + s.setting.values[o];
      }
      const auto at = std::find(values[a].begin(), values[a].end(), s.setting.values[a]);
      if (at != values[a].end()) b.columns[static_cast<std::size_t>(at - values[a].begin())] = &s;
    }
    for (const auto& h : order) out.push_back(std::move(by_held[h]));
  }
  return out;
}

std::vector<std::string> shown_measures(const SweepComparison& c, bool all_positions) {
  if (all_positions) return c.measures;
  std::map<std::string, std::size_t> most;  // sorted vector -> its highest position
  const std::string tag = ".position_";
  for (const std::string& m : c.measures)
    if (const auto at = m.rfind(tag); at != std::string::npos) {
      std::size_t& p = most[m.substr(0, at)];
      p = std::max<std::size_t>(p, std::stoul(m.substr(at + tag.size())));
    }
  std::vector<std::string> out;
  for (const std::string& m : c.measures) {
    const auto at = m.rfind(tag);
    if (at == std::string::npos) {
      out.push_back(m);
      continue;
    }
    const std::size_t p = std::stoul(m.substr(at + tag.size())), k = most[m.substr(0, at)];
    if (p == 1 || p == (k + 1) / 2 || p + 1 >= k) out.push_back(m);
  }
  return out;
}

const MeasureBand* find(const SettingSummary& s, const std::string& name) {
  for (const MeasureBand& m : s.measures)
    if (m.name == name) return &m;
  return nullptr;
}

std::string cell(const MeasureBand* m) {
  if (!m || m->draws == 0) return "-";
  return report::format_number(m->median) + " [" + report::format_number(m->low) + ", " +
         report::format_number(m->high) + "]";
}

}  // namespace blocks

void print_comparison(const SweepComparison& c, std::ostream& out) {
  const auto& keys = c.folder.keys;
  out << "sweep " << c.folder.dir << ": " << c.settings.size() << " setting" << (c.settings.size() == 1 ? "" : "s")
      << "; bands are median [10th, 90th percentile] of the records each verdict judges (type 7)\n\n";
  std::vector<std::string> header = {"setting"};
  for (const std::string& k : keys) header.push_back(k);
  header.insert(header.end(), {"status", "verdict"});
  std::vector<std::size_t> width(header.size());
  for (std::size_t i = 0; i < header.size(); ++i) width[i] = header[i].size();
  std::vector<std::vector<std::string>> rows;
  for (const SettingSummary& s : c.settings) {
    std::vector<std::string> row = {std::to_string(s.setting.index)};
    for (const std::string& v : s.setting.values) row.push_back(v);
    row.insert(row.end(), {s.status, s.verdict});
    for (std::size_t i = 0; i < row.size(); ++i) width[i] = std::max(width[i], row[i].size());
    rows.push_back(std::move(row));
  }
  auto line = [&](const std::vector<std::string>& cells) {
    for (std::size_t i = 0; i < cells.size(); ++i) out << std::left << std::setw(static_cast<int>(width[i] + 2)) << cells[i];
    out << "\n";
  };
  line(header);
  for (const auto& r : rows) line(r);

  std::size_t failed = 0, unfinished = 0;
  for (const SettingSummary& s : c.settings) {
    failed += s.verdict != "pass";
    unfinished += s.status != "finished";
  }
  if (failed > 0) {
    out << "\nWARNING: " << failed << " of " << c.settings.size()
        << " settings have not passed their convergence verdict; their bands may describe chains that "
           "have not mixed, and differences between settings may be the chains', not the rules':\n";
    for (const SettingSummary& s : c.settings)
      if (s.verdict != "pass") out << "  setting " << s.setting.index << ": " << s.verdict_line << "\n";
  }
  if (unfinished > 0)
    out << "\nnote: " << unfinished << " setting(s) not finished; run 'planmill sweep run " << c.folder.dir
        << "' to finish them\n";

  const std::vector<std::string> measures = blocks::shown_measures(c, false);
  std::size_t name_width = 8;
  for (const std::string& m : measures) name_width = std::max(name_width, m.size());
  for (const blocks::AxisBlock& b : blocks::axis_blocks(c)) {
    out << "\n";
    if (keys.empty() || c.folder.axis_values[b.axis].size() < 2) out << "every setting:\n";
    else out << keys[b.axis] << (b.held.empty() ? "" : ", with " + b.held) << ":\n";
    std::vector<std::string> heads;
    for (std::size_t v = 0; v < b.columns.size(); ++v)
      heads.push_back(keys.empty() || c.folder.axis_values[b.axis].size() < 2
                          ? "setting " + std::to_string(b.columns[v]->setting.index)
                          : c.folder.axis_values[b.axis][v]);
    std::vector<std::size_t> w(heads.size());
    std::vector<std::vector<std::string>> cells;
    for (const std::string& m : measures) {
      std::vector<std::string> row;
      for (const SettingSummary* s : b.columns) row.push_back(s ? blocks::cell(blocks::find(*s, m)) : "-");
      cells.push_back(std::move(row));
    }
    for (std::size_t v = 0; v < heads.size(); ++v) {
      w[v] = heads[v].size();
      for (const auto& row : cells) w[v] = std::max(w[v], row[v].size());
    }
    out << "  " << std::left << std::setw(static_cast<int>(name_width + 2)) << "measure";
    for (std::size_t v = 0; v < heads.size(); ++v) out << std::setw(static_cast<int>(w[v] + 2)) << heads[v];
    out << "\n";
    for (std::size_t r = 0; r < measures.size(); ++r) {
      out << "  " << std::setw(static_cast<int>(name_width + 2)) << measures[r];
      for (std::size_t v = 0; v < heads.size(); ++v) out << std::setw(static_cast<int>(w[v] + 2)) << cells[r][v];
      out << "\n";
    }
  }
}

}  // namespace planmill::sweep
