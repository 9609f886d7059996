#pragma once
// A strict CSV reader for the files users give planmill (unit tables, adjacency, plans).
// Comma separator; fields may be wrapped in double quotes, inside which "" is a quote and line
// breaks are kept; LF or CRLF line ends; a UTF-8 byte-order mark is skipped; blank lines at the end
// are ignored. Every row must have as many fields as the header. Any other shape is an InputError
// naming the file and line.
#include <cstddef>
#include <string>
#include <string_view>
#include <vector>

namespace planmill {

struct CsvRow {
  std::size_t line = 0;  // 1-based line on which the row starts
  std::vector<std::string> fields;
};

struct CsvTable {
  std::string source;  // file name used in error messages
  std::vector<std::string> header;
  std::vector<CsvRow> rows;  // data rows, without the header (which is on line 1)

  // Index of the header field called `name`, or npos.
  [[nodiscard]] std::size_t column_index(std::string_view name) const noexcept;
  // The header names quoted and comma-separated, for "columns are ..." messages.
  [[nodiscard]] std::string header_list() const;
};

// Parses CSV text; `source` names it in error messages. Empty text is an error.
[[nodiscard]] CsvTable parse_csv_text(std::string_view text, const std::string& source);

// Reads and parses a file; a file that cannot be opened is an InputError.
[[nodiscard]] CsvTable read_csv_file(const std::string& path);

// The field as written to a CSV file: quoted (with "" escapes) when it holds a comma, quote,
// line break or leading/trailing space, is empty, or starts with a byte-order mark (which a
// reader would drop at the start of a file).
[[nodiscard]] std::string csv_field(std::string_view value);

}  // namespace planmill
