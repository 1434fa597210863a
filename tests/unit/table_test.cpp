// Tables that fit the terminal: display widths and the fitting of report::Table.
#include "report/table.h"

#include <doctest/doctest.h>

#include <clocale>
#include <cwchar>
#include <string>

#include "report/wrap.h"

using keel::report::Align;
using keel::report::display_width;
using keel::report::shorten_to_width;
using keel::report::Style;
using keel::report::Table;

namespace {

// glibc's wcswidth() in the C.UTF-8 locale: an implementation of the same
// rule (UAX #11 East Asian Width; marks of zero width) that is not keel's.
int glibc_width(const std::string& utf8) {
  const char* old = std::setlocale(LC_CTYPE, nullptr);
  const std::string saved = old ? old : "C";
  std::setlocale(LC_CTYPE, "C.UTF-8");
  std::wstring wide(utf8.size() + 1, L'\0');
  const std::size_t n = std::mbstowcs(wide.data(), utf8.c_str(), wide.size());
  const int width = n == static_cast<std::size_t>(-1) ? -1 : ::wcswidth(wide.c_str(), n);
  std::setlocale(LC_CTYPE, saved.c_str());
  return width;
}

Table names_table() {
  Table t({{"account", Align::left, true},
           {"symbol"},
           {"market value", Align::right},
           {"price", Align::right, false, 2},
           {"weight", Align::right, false, 1}});
  t.add_row({"Hollow Creek Retirement Savings", "QJHL", "1234567.89", "72.69", "41.20%"});
  t.add_row({"Joint", "QJMO", "5.00", "92.78", "0.01%"});
  return t;
}

}  // namespace

TEST_CASE("display width: wide characters count 2 and combining marks 0, as glibc's wcswidth") {
  // U+4E2D and U+6587 are East Asian Wide, U+FF21 Fullwidth (Unicode's
  // EastAsianWidth.txt); U+0301 is a nonspacing mark; U+00E9 is narrow.
  for (const std::string text :
       {"abc", "中文", "Ａ", "e\xCC\x81", "\xC3\xA9t\xC3\xA9", "株式会社Kō", "Ｘ-\xE4\xB8\xAD"}) {
    CAPTURE(text);
    CHECK(static_cast<int>(display_width(text)) == glibc_width(text));
  }
  CHECK(display_width("中文") == 4);
  CHECK(display_width("e\xCC\x81") == 1);
}

TEST_CASE("display width: every printable ASCII character counts 1, as glibc's wcswidth") {
  std::string all;
  for (char c = 0x20; c < 0x7f; ++c) {
    const std::string one(1, c);
    CAPTURE(one);
    CHECK(static_cast<int>(display_width(one)) == glibc_width(one));
    all += c;
  }
  CHECK(display_width(all) == 95);
  CHECK(display_width(all + "中") == 97);  // one wide character among them
}

TEST_CASE("display width: shortening keeps whole characters and ends in an ellipsis") {
  CHECK(shorten_to_width("Hollow Creek", 8) == "Hollow …");
  CHECK(shorten_to_width("中文中文", 5) == "中文…");  // a wide character never splits
  CHECK(shorten_to_width("Cafe\xCC\x81 Nord", 5) == "Cafe\xCC\x81…");  // the mark stays
  CHECK(shorten_to_width("short", 5) == "short");
}

TEST_CASE("table: a wide name in double-width characters lines up") {
  Table t({{"name"}, {"value", Align::right}});
  t.add_row({"中文", "1.00"});
  t.add_row({"abcd", "22.00"});
  CHECK(t.render() ==
        "name  value\n"
        "-----------\n"
        "中文   1.00\n"
        "abcd  22.00\n");
}

TEST_CASE("table: without a width every column keeps its full width") {
  CHECK(names_table().render() ==
        "account                          symbol  market value  price  weight\n"
        "--------------------------------------------------------------------\n"
        "Hollow Creek Retirement Savings  QJHL      1234567.89  72.69  41.20%\n"
        "Joint                            QJMO            5.00  92.78   0.01%\n");
}

TEST_CASE("table: names shorten with an ellipsis before any column is left out") {
  CHECK(names_table().render(Style{false, 50}) ==
        "account        symbol  market value  price  weight\n"
        "--------------------------------------------------\n"
        "Hollow Creek…  QJHL      1234567.89  72.69  41.20%\n"
        "Joint          QJMO            5.00  92.78   0.01%\n");
}

TEST_CASE("table: when names are as short as they go, the highest-ranked column is left out") {
  CHECK(names_table().render(Style{false, 40}) ==
        "account     symbol  market value  weight\n"
        "----------------------------------------\n"
        "Hollow Cr…  QJHL      1234567.89  41.20%\n"
        "Joint       QJMO            5.00   0.01%\n"
        "(left out to fit 40 columns: price; pipe the output for every column)\n");
}

TEST_CASE("table: numbers are never cut, even when nothing more can be left out") {
  const std::string text = names_table().render(Style{false, 20});
  CHECK(text.find("1234567.89") != std::string::npos);
  CHECK(text.find("(left out to fit 20 columns: price, weight;") != std::string::npos);
}

TEST_CASE("table: after leaving columns out, names shorten down to their headings") {
  Table t({{"id", Align::right}, {"account", Align::left, true}, {"amount", Align::right}});
  t.add_row({"2003", "Ardwyn Joint Taxable", "1234567.89"});
  CHECK(t.render(Style{false, 25}) ==
        "  id  account      amount\n"
        "-------------------------\n"
        "2003  Ardwyn…  1234567.89\n");
}

TEST_CASE("wrapping: prose breaks at spaces, never inside a number, keeping its indent") {
  CHECK(keel::report::wrap_to_width("  - values clipped to [12.842, 29.812]; 10 selected\n", 24) ==
        "  - values clipped to\n"
        "  [12.842, 29.812]; 10\n"
        "  selected\n");
  CHECK(keel::report::wrap_to_width("short line\n", 24) == "short line\n");
  CHECK(keel::report::wrap_to_width("no limit at all here", 0) == "no limit at all here");
}

TEST_CASE("wrapping: colour sequences take no columns") {
  const std::string bold = "\x1b[1mname  value\x1b[0m\n";
  CHECK(keel::report::wrap_to_width(bold, 11) == bold);
}
