// The CSV reader against RFC 4180 section 2 (rules numbered as in the RFC;
// the example inputs are the RFC's own, quoted from its text from memory).
#include "io/csv.h"

#include <doctest/doctest.h>

#include <regex>
#include <string>
#include <vector>

#include "core/error.h"

using keel::io::CsvOptions;
using keel::io::CsvReader;
using keel::io::CsvRecord;

namespace {

struct Read {
  std::vector<std::vector<std::string>> rows;
  std::vector<std::uint64_t> lines;
  std::vector<std::string> problems;
};

Read read_all(const std::string& text, CsvOptions options = {}) {
  auto r = CsvReader::from_text(text, "t.csv", options);
  Read out;
  CsvRecord rec;
  while (r.next(rec)) {
    if (rec.problem) {
      out.problems.push_back(std::to_string(rec.line) + ":" + std::to_string(rec.problem->field) +
                             ":" + rec.problem->reason);
      continue;
    }
    out.rows.emplace_back(rec.fields.begin(), rec.fields.end());
    out.lines.push_back(rec.line);
  }
  return out;
}

using Rows = std::vector<std::vector<std::string>>;

}  // namespace

TEST_CASE("RFC 4180 2.1: records are separated by CRLF") {
  const auto r = read_all("aaa,bbb,ccc\r\nzzz,yyy,xxx\r\n");
  CHECK(r.rows == Rows{{"aaa", "bbb", "ccc"}, {"zzz", "yyy", "xxx"}});
  CHECK(r.problems.empty());
}

TEST_CASE("RFC 4180 2.1 (common practice): a bare LF also ends a record") {
  const auto r = read_all("aaa,bbb\nzzz,yyy\n");
  CHECK(r.rows == Rows{{"aaa", "bbb"}, {"zzz", "yyy"}});
}

TEST_CASE("RFC 4180 2.2: the last record may lack a line break") {
  const auto r = read_all("aaa,bbb,ccc\r\nzzz,yyy,xxx");
  CHECK(r.rows == Rows{{"aaa", "bbb", "ccc"}, {"zzz", "yyy", "xxx"}});
}

TEST_CASE("RFC 4180 2.3: a header line is read like any record") {
  const auto r = read_all("field_name,field_name,field_name\r\naaa,bbb,ccc\r\n");
  CHECK(r.rows.size() == 2);
  CHECK(r.rows[0][0] == "field_name");
}

TEST_CASE("RFC 4180 2.4: spaces are part of a field and empty fields are kept") {
  const auto r = read_all(" aaa , bbb,\n");
  CHECK(r.rows == Rows{{" aaa ", " bbb", ""}});
}

TEST_CASE("RFC 4180 2.5: fields may be enclosed in double quotes") {
  const auto r = read_all("\"aaa\",\"bbb\",\"ccc\"\r\nzzz,yyy,xxx");
  CHECK(r.rows == Rows{{"aaa", "bbb", "ccc"}, {"zzz", "yyy", "xxx"}});
}

TEST_CASE("RFC 4180 2.6: quoted fields hold line breaks and commas; lines are counted") {
  const auto r = read_all("\"aaa\",\"b\r\nbb\",\"c,cc\"\r\nzzz,yyy,xxx\r\n");
  CHECK(r.rows == Rows{{"aaa", "b\r\nbb", "c,cc"}, {"zzz", "yyy", "xxx"}});
  CHECK(r.lines == std::vector<std::uint64_t>{1, 3});
}

TEST_CASE("RFC 4180 2.7: a double quote inside a quoted field is doubled") {
  const auto r = read_all("\"aaa\",\"b\"\"bb\",\"ccc\"");
  CHECK(r.rows == Rows{{"aaa", "b\"bb", "ccc"}});
}

TEST_CASE("RFC 4180 2.5: a double quote inside an unquoted field is refused, reading goes on") {
  const auto r = read_all("a,b\"c,d\nx,y,z\n");
  REQUIRE(r.problems.size() == 1);
  CHECK(r.problems[0].rfind("1:1:double quote inside a field", 0) == 0);
  CHECK(r.rows == Rows{{"x", "y", "z"}});
}

TEST_CASE("RFC 4180 2.7: text after a closing quote is refused") {
  const auto r = read_all("\"ab\"c,d\n");
  REQUIRE(r.problems.size() == 1);
  CHECK(r.problems[0].find("after a closing double quote") != std::string::npos);
}

TEST_CASE("RFC 4180 2.7: a quoted field open at end of file is refused") {
  const auto r = read_all("a,\"never closed\nb,c\n");
  REQUIRE(r.problems.size() == 1);
  CHECK(r.problems[0].rfind("1:1:quoted field is not closed", 0) == 0);
}

TEST_CASE("RFC 4180 2.1: a carriage return without a line feed is refused outside quotes") {
  const auto r = read_all("a,b\rc\n");
  REQUIRE(r.problems.size() == 1);
  CHECK(r.problems[0].find("carriage return") != std::string::npos);
}

TEST_CASE("a UTF-8 byte order mark at the start is skipped; UTF-8 text is kept") {
  const auto r = read_all("\xEF\xBB\xBFsymbol,name\nQRX,Caf\xC3\xA9 Nord\n");
  CHECK(r.rows == Rows{{"symbol", "name"}, {"QRX", "Caf\xC3\xA9 Nord"}});
}

TEST_CASE("a quoted empty field is not a blank line") {
  auto reader = CsvReader::from_text("\"\"\n\n", "t.csv");
  CsvRecord rec;
  REQUIRE(reader.next(rec));
  CHECK_FALSE(rec.blank());
  REQUIRE(reader.next(rec));
  CHECK(rec.blank());
}

TEST_CASE("records spanning chunk boundaries read the same as in one piece") {
  std::string text;
  for (int i = 0; i < 500; ++i)
    text += "row" + std::to_string(i) + ",\"multi\nline \"\"" + std::to_string(i) + "\"\"\",x\r\n";
  CsvOptions small;
  small.chunk_bytes = 7;  // forces refills in the middle of fields and quotes
  const auto whole = read_all(text);
  const auto pieces = [&] {
    // from_text holds everything; write to a file to use the chunked path.
    const auto path = std::filesystem::temp_directory_path() / "keel_csv_chunks_test.csv";
    {
      std::FILE* f = std::fopen(path.c_str(), "wb");
      std::fwrite(text.data(), 1, text.size(), f);
      std::fclose(f);
    }
    auto reader = CsvReader::open(path, small);
    Read out;
    CsvRecord rec;
    while (reader.next(rec)) {
      out.rows.emplace_back(rec.fields.begin(), rec.fields.end());
      out.lines.push_back(rec.line);
    }
    std::filesystem::remove(path);
    return out;
  }();
  CHECK(whole.rows.size() == 500);
  CHECK(pieces.rows == whole.rows);
  CHECK(pieces.lines == whole.lines);
  CHECK(whole.lines[499] == 999);
}

TEST_CASE("writing then reading a record gives the same fields (RFC 4180 2.6, 2.7)") {
  const std::vector<std::string_view> fields{"plain", "with,comma", "with \"quote\"", "two\nlines",
                                             ""};
  std::string out;
  keel::io::append_csv_record(out, fields);
  CHECK(out == "plain,\"with,comma\",\"with \"\"quote\"\"\",\"two\nlines\",\n");
  const auto r = read_all(out);
  REQUIRE(r.rows.size() == 1);
  CHECK(r.rows[0] == std::vector<std::string>(fields.begin(), fields.end()));
}

TEST_CASE("a missing file is an error naming it") {
  CHECK_THROWS_WITH_AS(CsvReader::open("/nonexistent/keel/none.csv"),
                       doctest::Contains("/nonexistent/keel/none.csv: cannot open"),
                       keel::InputError);
}

TEST_CASE("export cells: text a spreadsheet would run as a formula gets a leading apostrophe") {
  std::string scratch;
  for (const char* cell :
       {"=1+1", "+cmd", "-2+3", "@SUM(A1)", "\tx", "\rx", "-", "+5", "-1e5", "'=x", "''", "'-"}) {
    CAPTURE(cell);
    CHECK(keel::io::formula_guarded(cell, scratch) == std::string("'") + cell);
  }
  for (const char* cell : {"plain", "'plain", "'", "12.5", "-0.25", "-12", "0", "2024-01-02", ""}) {
    CAPTURE(cell);
    CHECK(keel::io::formula_guarded(cell, scratch) == cell);
  }
}

TEST_CASE("export cells: every guarded cell reads back exactly and runs no formula") {
  // Every string of up to four characters over the characters that matter.
  const std::string alphabet = "'=+-@\t\r.1a";
  std::vector<std::string> cells{""};
  for (int length = 1; length <= 4; ++length) {
    const std::size_t before = cells.size();
    for (std::size_t i = 0; i < before; ++i)
      if (cells[i].size() == static_cast<std::size_t>(length - 1))
        for (const char c : alphabet) cells.push_back(cells[i] + c);
  }
  std::string scratch;
  int checked = 0;
  for (const auto& cell : cells) {
    const std::string guarded(keel::io::formula_guarded(cell, scratch));
    CHECK(std::string(keel::io::formula_unguarded(guarded)) == cell);
    const bool number = std::regex_match(guarded, std::regex("-?[0-9]+(\\.[0-9]+)?"));
    if (!guarded.empty() && std::string("=+-@\t\r").find(guarded.front()) != std::string::npos)
      CHECK(number);
    ++checked;
  }
  CHECK(checked == 11111);
}

TEST_CASE("regression: export --csv wrote text starting with = raw, and import read it raw") {
  std::string out;
  keel::io::append_export_record(out, {"=HYPERLINK(\"x\")", "-0.25", "'=a"});
  CHECK(out == "\"'=HYPERLINK(\"\"x\"\")\",-0.25,''=a\n");
}
