// The CSV reader against RFC 4180 (quoting, "" escapes, line breaks inside quotes, CRLF) and our
// own rules (BOM skipped, trailing blank lines ignored, every other irregularity an InputError).
#include "planmill/io/csv.hpp"

#include <gtest/gtest.h>

#include "temp_files.hpp"

namespace planmill {
namespace {

using test::expect_input_error;

TEST(Csv, ReadsHeaderAndRowsWithLineNumbers) {
  const CsvTable t = parse_csv_text("id,pop\na,1\nb,2\n", "u.csv");
  EXPECT_EQ(t.source, "u.csv");
  ASSERT_EQ(t.header, (std::vector<std::string>{"id", "pop"}));
  ASSERT_EQ(t.rows.size(), 2U);
  EXPECT_EQ(t.rows[0].line, 2U);
  EXPECT_EQ(t.rows[1].line, 3U);
  EXPECT_EQ(t.rows[1].fields, (std::vector<std::string>{"b", "2"}));
  EXPECT_EQ(t.column_index("pop"), 1U);
  EXPECT_EQ(t.column_index("nope"), std::string::npos);
}

TEST(Csv, QuotedFieldsFollowRfc4180) {
  // RFC 4180 section 2, rules 5-7: quotes around a field, "" inside for one quote, commas and
  // line breaks allowed inside quotes.
  const CsvTable t = parse_csv_text("a,b\n\"x,y\",\"say \"\"hi\"\"\"\n\"two\nlines\",z\nlast,\"\"\n", "q.csv");
  ASSERT_EQ(t.rows.size(), 3U);
  EXPECT_EQ(t.rows[0].fields[0], "x,y");
  EXPECT_EQ(t.rows[0].fields[1], "say \"hi\"");
  EXPECT_EQ(t.rows[1].fields[0], "two\nlines");
  EXPECT_EQ(t.rows[1].line, 3U);
  EXPECT_EQ(t.rows[2].line, 5U);  // the quoted line break counts as a line
  EXPECT_EQ(t.rows[2].fields[1], "");
}

TEST(Csv, CrlfBomAndTrailingBlankLines) {
  const CsvTable t = parse_csv_text("\xEF\xBB\xBFid,pop\r\na,1\r\nb,\"2\r\n3\"\r\n\r\n  \r\n\n", "w.csv");
  ASSERT_EQ(t.header[0], "id");
  ASSERT_EQ(t.rows.size(), 2U);
  EXPECT_EQ(t.rows[0].fields[1], "1");
  EXPECT_EQ(t.rows[1].fields[1], "2\r\n3");  // inside quotes the line end is kept as written
  const CsvTable no_final_newline = parse_csv_text("id\nx", "n.csv");
  ASSERT_EQ(no_final_newline.rows.size(), 1U);
  EXPECT_EQ(no_final_newline.rows[0].fields[0], "x");
}

TEST(Csv, SpacesAreKept) {
  const CsvTable t = parse_csv_text("a,b\n x , y\n", "s.csv");
  EXPECT_EQ(t.rows[0].fields[0], " x ");
  EXPECT_EQ(t.rows[0].fields[1], " y");
}

TEST(Csv, HeaderOnlyHasNoRows) { EXPECT_TRUE(parse_csv_text("a,b\n", "h.csv").rows.empty()); }

TEST(Csv, EmptyFileIsAnError) {
  expect_input_error([] { (void)parse_csv_text("", "e.csv"); }, "e.csv", 0, "");
  expect_input_error([] { (void)parse_csv_text("\xEF\xBB\xBF\n\r\n", "e.csv"); }, "e.csv", 0, "");
}

TEST(Csv, WrongFieldCountNamesTheLine) {
  const std::string m = expect_input_error([] { (void)parse_csv_text("a,b\n1,2\n3\n", "f.csv"); }, "f.csv", 3, "");
  EXPECT_NE(m.find("1 fields, the header has 2"), std::string::npos) << m;
  expect_input_error([] { (void)parse_csv_text("a,b\n1,2,\n", "f.csv"); }, "f.csv", 2, "");
}

TEST(Csv, UnterminatedQuoteNamesTheLineWhereItOpens) {
  const std::string m =
      expect_input_error([] { (void)parse_csv_text("a,b\n1,2\n3,\"open\n\n4,5\n", "u.csv"); }, "u.csv", 3, "");
  EXPECT_NE(m.find("never closed"), std::string::npos) << m;
}

TEST(Csv, BlankLineInsideIsAnError) {
  expect_input_error([] { (void)parse_csv_text("a,b\n1,2\n\n3,4\n", "b.csv"); }, "b.csv", 3, "");
}

TEST(Csv, StrayQuotesAreErrors) {
  expect_input_error([] { (void)parse_csv_text("a,b\n1,x\"y\n", "s.csv"); }, "s.csv", 2, "");
  expect_input_error([] { (void)parse_csv_text("a,b\n1,\"x\"y\n", "s.csv"); }, "s.csv", 2, "");
  expect_input_error([] { (void)parse_csv_text("a,b\n1,x\ry\n", "s.csv"); }, "s.csv", 2, "");
}

TEST(Csv, FileThatCannotBeOpened) {
  test::TempDir dir;
  const std::string missing = (dir.path() / "missing.csv").string();
  expect_input_error([&] { (void)read_csv_file(missing); }, missing, 0, "");
  expect_input_error([&] { (void)read_csv_file(dir.path().string()); }, dir.path().string(), 0, "");
}

TEST(Csv, ReadsAFile) {
  test::TempDir dir;
  const std::string path = dir.write("t.csv", "x,y\r\n1,2\r\n");
  const CsvTable t = read_csv_file(path);
  EXPECT_EQ(t.source, path);
  ASSERT_EQ(t.rows.size(), 1U);
  EXPECT_EQ(t.rows[0].fields[1], "2");
}

TEST(Csv, FieldWriterRoundTrips) {
  const std::vector<std::string> values = {"plain", "with,comma", "say \"hi\"", "two\nlines", " padded ", "", "x\r\ny"};
  // A value starting with a byte-order mark must survive being the first field of a file.
  const CsvTable first = parse_csv_text(csv_field("\xEF\xBB\xBFid") + "\nx\n", "bom.csv");
  EXPECT_EQ(first.header[0], "\xEF\xBB\xBFid");
  std::string text = "v\n";
  for (const auto& v : values) text += csv_field(v) + "\n";
  const CsvTable t = parse_csv_text(text, "r.csv");
  ASSERT_EQ(t.rows.size(), values.size());
  for (std::size_t i = 0; i < values.size(); ++i) EXPECT_EQ(t.rows[i].fields[0], values[i]);
  EXPECT_EQ(csv_field("plain"), "plain");
}

}  // namespace
}  // namespace planmill
