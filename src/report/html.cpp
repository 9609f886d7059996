#include "planmill/report/html.hpp"

#include "planmill/report/svg.hpp"

namespace planmill::report {
namespace {

// Our own look: a contents rail on wide screens, numbered section tabs, tables with ruled rows.
// The content column is at most 178 mm wide, which fits A4 (210 mm) and Letter (215.9 mm) with
// 16 mm margins, so the layout is the same on both papers; only @page size differs.
constexpr std::string_view kCss = R"CSS(
:root { --ink: #1d2330; --muted: #5a6270; --rule: #c9ced6; --accent: #0b4f6c; --paper: #fbfaf7; }
* { box-sizing: border-box; }
html { background: #eceae4; }
body { margin: 0; color: var(--ink); font: 15px/1.5 system-ui, -apple-system, "Segoe UI", "Noto Sans",
  "DejaVu Sans", sans-serif; }
.sheet { max-width: 178mm; margin: 0 auto; padding: 18px 22px 40px; background: var(--paper); }
@media screen and (min-width: 1100px) {
  .layout { display: grid; grid-template-columns: 220px minmax(0, 178mm); gap: 24px; justify-content: center; }
  nav.contents { position: sticky; top: 12px; align-self: start; padding-top: 24px; }
}
nav.contents ol { list-style: none; padding: 0; margin: 0; counter-reset: c; }
nav.contents li { counter-increment: c; margin: 4px 0; font-size: 13px; }
nav.contents li::before { content: counter(c); display: inline-block; width: 1.6em; color: var(--accent);
  font-weight: 700; }
nav.contents a { color: var(--ink); text-decoration: none; }
header.top { border-left: 6px solid var(--accent); padding: 4px 0 4px 14px; margin: 8px 0 18px; }
header.top h1 { font-size: 24px; margin: 0; letter-spacing: 0.01em; }
header.top p { margin: 2px 0; color: var(--muted); font-size: 13px; }
main { counter-reset: s; }
section { counter-increment: s; margin-top: 28px; }
section > h2 { font-size: 18px; margin: 0 0 10px; padding-bottom: 4px; border-bottom: 2px solid var(--ink); }
section > h2::before { content: counter(s); display: inline-block; min-width: 1.7em; margin-right: 8px;
  padding: 0 6px; background: var(--ink); color: var(--paper); text-align: center; border-radius: 3px; }
h3 { font-size: 15px; margin: 18px 0 6px; color: var(--accent); }
p { margin: 6px 0; }
p.caution { border: 1.5px solid var(--ink); padding: 8px 12px; background: #fff; }
p.verdict { font-weight: 700; padding: 6px 10px; border-left: 4px solid var(--ink); background: #fff; }
p.note { color: var(--muted); font-size: 13px; }
table { border-collapse: collapse; width: 100%; font-size: 12px; margin: 8px 0 14px; }
caption { text-align: left; font-size: 12px; color: var(--muted); padding-bottom: 3px; }
th { text-align: left; border-bottom: 1.5px solid var(--ink); padding: 3px 6px; }
td { border-bottom: 1px solid var(--rule); padding: 2px 6px; font-variant-numeric: tabular-nums;
  overflow-wrap: break-word; }
td.digest { font-family: ui-monospace, "DejaVu Sans Mono", monospace; font-size: 10px; word-break: break-all; }
figure { margin: 12px 0 18px; padding: 8px; background: #fff; border: 1px solid var(--rule); }
figure svg { width: 100%; height: auto; display: block; }
figcaption { font-size: 12px; color: var(--muted); margin-top: 4px; }
figcaption b { color: var(--ink); }
code { font-family: ui-monospace, "DejaVu Sans Mono", monospace; font-size: 12px; }
@media print {
  html, .sheet { background: #fff; }
  nav.contents { display: none; }
  .sheet { max-width: none; padding: 0; }
  body { font-size: 10.5pt; }
  section { break-before: page; margin-top: 0; }
  figure, table, p.caution, p.verdict { break-inside: avoid; }
  h2, h3 { break-after: avoid; }
  thead { display: table-header-group; }
}
)CSS";

// A SHA-256 digest is set small in monospace and may break anywhere; a name breaks after its dots
// and underscores (<wbr>), a number never.
std::string cell_html(const std::string& cell) {
  const bool digest = cell.size() == 64 && cell.find_first_not_of("0123456789abcdef") == std::string::npos;
  if (digest) return "<td class=\"digest\">" + cell + "</td>";
  std::string out = "<td>";
  const bool name = cell.find_first_of("abcdefghijklmnopqrstuvwxyz") != std::string::npos;
  for (const char c : cell) {
    out += escape_html(std::string_view(&c, 1));
    if (name && (c == '.' || c == '_' || c == '/')) out += "<wbr>";
  }
  return out + "</td>";
}

}  // namespace

std::string escape_html(std::string_view text) { return escape_xml(text); }

std::string_view paper_css_name(Paper paper) { return paper == Paper::a4 ? "A4" : "letter"; }

std::string paragraph(std::string_view text, std::string_view css_class) {
  return css_class.empty() ? "<p>" + escape_html(text) + "</p>\n"
                           : "<p class=\"" + escape_html(css_class) + "\">" + escape_html(text) + "</p>\n";
}

std::string table(const std::vector<std::string>& header, const std::vector<std::vector<std::string>>& rows,
                  std::string_view caption) {
  std::string t = "<table>";
  if (!caption.empty()) t += "<caption>" + escape_html(caption) + "</caption>";
  t += "<thead><tr>";
  for (const auto& h : header) t += "<th>" + escape_html(h) + "</th>";
  t += "</tr></thead><tbody>\n";
  for (const auto& row : rows) {
    t += "<tr>";
    for (const auto& cell : row) t += cell_html(cell);
    t += "</tr>\n";
  }
  return t + "</tbody></table>\n";
}

std::string figure(std::string_view svg, std::string_view title, std::string_view caption,
                   std::string_view file_hint) {
  std::string f = "<figure>" + std::string(svg) + "<figcaption><b>" + escape_html(title) + ".</b> " +
                  escape_html(caption);
  if (!file_hint.empty()) f += " <code>" + escape_html(file_hint) + "</code>";
  return f + "</figcaption></figure>\n";
}

std::string render_html(const Document& d, Paper paper) {
  std::string h = "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
                  "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">"
                  "<title>" + escape_html(d.title) + "</title><style>";
  h += kCss;
  h += "@page { size: " + std::string(paper_css_name(paper)) + "; margin: 16mm 16mm 18mm; }\n</style></head>\n";
  h += "<body><div class=\"layout\"><nav class=\"contents\" aria-label=\"contents\"><ol>";
  for (const auto& s : d.sections) h += "<li><a href=\"#" + escape_html(s.id) + "\">" + escape_html(s.heading) + "</a></li>";
  h += "</ol></nav><div class=\"sheet\"><header class=\"top\"><h1>" + escape_html(d.title) + "</h1><p>" +
       escape_html(d.subtitle) + "</p></header><main>\n";
  for (const auto& s : d.sections)
    h += "<section id=\"" + escape_html(s.id) + "\"><h2>" + escape_html(s.heading) + "</h2>\n" + s.body + "</section>\n";
  return h + "</main></div></div></body></html>\n";
}

}  // namespace planmill::report
