#pragma once
// The report as one self-contained HTML file: inline CSS, inline SVG, no script, no font, no
// image or style fetched from anywhere. Print CSS: the chosen paper size (@page), a page break
// before each section, figures and tables that do not split across pages.
#include <string>
#include <string_view>
#include <vector>

namespace planmill::report {

// & < > " ' as entities (the same rules as escape_xml).
[[nodiscard]] std::string escape_html(std::string_view text);

enum class Paper { a4, letter };
// "A4" or "letter", as CSS's @page size names them.
[[nodiscard]] std::string_view paper_css_name(Paper paper);

struct Section {
  std::string id;       // anchor, [a-z0-9-]
  std::string heading;  // plain text
  std::string body;     // HTML built by the caller (text already escaped)
};

struct Document {
  std::string title;     // plain text
  std::string subtitle;  // plain text
  std::vector<Section> sections;
};

// The whole file.
[[nodiscard]] std::string render_html(const Document& document, Paper paper);

// Pieces the caller builds sections from; every text argument is plain text and is escaped.
[[nodiscard]] std::string paragraph(std::string_view text, std::string_view css_class = {});
// A table: header cells, then rows; cells are plain text.
[[nodiscard]] std::string table(const std::vector<std::string>& header,
                                const std::vector<std::vector<std::string>>& rows, std::string_view caption = {});
// A figure: an inline SVG (already built, trusted markup) with its title and caption (plain text).
[[nodiscard]] std::string figure(std::string_view svg, std::string_view title, std::string_view caption,
                                 std::string_view file_hint = {});

}  // namespace planmill::report
