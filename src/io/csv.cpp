#include "planmill/io/csv.hpp"

#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "planmill/base/error.hpp"

namespace planmill {
namespace {

bool is_blank_char(char c) { return c == ' ' || c == '\t' || c == '\r' || c == '\n'; }

// Splits text into records. Records hold their starting line; the caller checks their widths.
class Parser {
 public:
  Parser(std::string_view text, const std::string& source) : text_(text), source_(source) {}

  std::vector<CsvRow> records() {
    std::vector<CsvRow> out;
    while (pos_ < text_.size()) {
      if (at_line_end()) {
        throw InputError({source_, line_, {}}, "line " + std::to_string(line_) + " is blank",
                         "remove blank lines inside the table");
      }
      CsvRow row;
      row.line = line_;
      read_record(row.fields);
      out.push_back(std::move(row));
    }
    return out;
  }

 private:
  bool at_line_end() const {
    const char c = text_[pos_];
    return c == '\n' || (c == '\r' && pos_ + 1 < text_.size() && text_[pos_ + 1] == '\n');
  }
  // Consumes a line end at pos_ if there is one.
  bool take_line_end() {
    if (pos_ >= text_.size() || !at_line_end()) return false;
    pos_ += text_[pos_] == '\r' ? 2 : 1;
    ++line_;
    return true;
  }

  void read_record(std::vector<std::string>& fields) {
    const std::size_t record_line = line_;
    for (;;) {
      std::string field;
      if (pos_ < text_.size() && text_[pos_] == '"') read_quoted(field, fields.size() + 1);
      else read_plain(field, fields.size() + 1);
      fields.push_back(std::move(field));
      if (pos_ >= text_.size() || take_line_end()) return;
      if (text_[pos_] == ',') {
        ++pos_;
        continue;
      }
      // read_plain and read_quoted stop only at a comma, a line end or the end of the text.
      throw InputError({source_, record_line, {}}, "malformed field " + std::to_string(fields.size()));
    }
  }

  void read_plain(std::string& field, std::size_t number) {
    const std::size_t start = pos_;
    while (pos_ < text_.size()) {
      const char c = text_[pos_];
      if (c == ',' || c == '\n') break;
      if (c == '\r') {
        if (pos_ + 1 < text_.size() && text_[pos_ + 1] == '\n') break;
        throw InputError({source_, line_, {}},
                         "field " + std::to_string(number) + " holds a carriage return without a line feed",
                         "save the file with LF or CRLF line ends");
      }
      if (c == '"') {
        throw InputError({source_, line_, {}},
                         "field " + std::to_string(number) + " has a double quote inside an unquoted value",
                         "wrap the whole field in double quotes and write each quote in it as \"\"");
      }
      ++pos_;
    }
    field.assign(text_.substr(start, pos_ - start));
  }

  void read_quoted(std::string& field, std::size_t number) {
    const std::size_t open_line = line_;
    ++pos_;  // opening quote
    for (;;) {
      if (pos_ >= text_.size()) {
        throw InputError({source_, open_line, {}},
                         "field " + std::to_string(number) + " opens a double quote that is never closed",
                         "add the closing quote, and write quotes inside the field as \"\"");
      }
      const char c = text_[pos_];
      if (c == '"') {
        if (pos_ + 1 < text_.size() && text_[pos_ + 1] == '"') {
          field.push_back('"');
          pos_ += 2;
          continue;
        }
        ++pos_;
        break;
      }
      if (c == '\n') ++line_;
      field.push_back(c);
      ++pos_;
    }
    if (pos_ < text_.size() && text_[pos_] != ',' && !at_line_end()) {
      throw InputError({source_, line_, {}},
                       "field " + std::to_string(number) + " has text after its closing double quote",
                       "quote the whole field, and write quotes inside it as \"\"");
    }
  }

  std::string_view text_;
  const std::string& source_;
  std::size_t pos_ = 0;
  std::size_t line_ = 1;
};

}  // namespace

std::size_t CsvTable::column_index(std::string_view name) const noexcept {
  for (std::size_t i = 0; i < header.size(); ++i)
    if (header[i] == name) return i;
  return std::string::npos;
}

std::string CsvTable::header_list() const {
  std::string out;
  for (const auto& name : header) {
    if (!out.empty()) out += ", ";
    out += "'" + name + "'";
  }
  return out;
}

CsvTable parse_csv_text(std::string_view text, const std::string& source) {
  if (text.substr(0, 3) == "\xEF\xBB\xBF") text.remove_prefix(3);
  // Drop blank lines at the end: cut right after the line that holds the last visible character.
  std::size_t last = text.size();
  while (last > 0 && is_blank_char(text[last - 1])) --last;
  if (last == 0) throw InputError({source, 0, {}}, "the file is empty", "it needs a header line and data rows");
  const std::size_t newline = text.find('\n', last);
  text = text.substr(0, newline == std::string_view::npos ? text.size() : newline + 1);

  std::vector<CsvRow> records = Parser(text, source).records();
  CsvTable table;
  table.source = source;
  table.header = std::move(records.front().fields);
  table.rows.reserve(records.size() - 1);
  for (std::size_t r = 1; r < records.size(); ++r) {
    CsvRow& row = records[r];
    if (row.fields.size() != table.header.size()) {
      throw InputError({source, row.line, {}},
                       "this row has " + std::to_string(row.fields.size()) + " fields, the header has " +
                           std::to_string(table.header.size()),
                       "check for a missing or extra comma, and quote fields that contain commas");
    }
    table.rows.push_back(std::move(row));
  }
  return table;
}

CsvTable read_csv_file(const std::string& path) {
  std::error_code ec;
  if (std::filesystem::is_directory(path, ec))
    throw InputError({path, 0, {}}, "is a folder, not a file", "give the path of the CSV file");
  if (!std::filesystem::exists(path, ec)) {
    throw InputError({path, 0, {}}, "is missing",
                     "check the path (relative paths are taken from the job file's folder)");
  }
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    throw InputError({path, 0, {}}, std::string("cannot open the file: ") + std::strerror(errno),
                     "check the path (relative paths are taken from the job file's folder)");
  }
  std::ostringstream buffer;
  buffer << in.rdbuf();
  if (in.bad()) throw InputError({path, 0, {}}, "cannot read the file", "check that it is readable");
  return parse_csv_text(buffer.view(), path);
}

std::string csv_field(std::string_view value) {
  const bool needs_quotes = value.empty() || value.find_first_of(",\"\r\n") != std::string_view::npos ||
                            value.front() == ' ' || value.back() == ' ' || value.front() == '\t' ||
                            value.back() == '\t' || value.substr(0, 3) == "\xEF\xBB\xBF";
  if (!needs_quotes) return std::string(value);
  std::string out = "\"";
  for (char c : value) {
    if (c == '"') out += '"';
    out += c;
  }
  out += '"';
  return out;
}

}  // namespace planmill
