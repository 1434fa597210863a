// The compact buffer a bulk price import keeps its rows in until it writes
// them: exact text back, key order, bounded memory.
#include "store/price_buffer.h"

#include <doctest/doctest.h>

#include <stdexcept>
#include <string>
#include <vector>

using keel::store::BufferedPrice;
using keel::store::PriceBuffer;

namespace {

struct Read {
  std::string date, close;
  std::uint64_t line;
  friend bool operator==(const Read&, const Read&) = default;
};

std::vector<Read> read_all(const PriceBuffer& b, std::size_t sec) {
  std::vector<Read> out;
  auto r = b.read(sec);
  BufferedPrice p;
  while (r.next(p)) out.push_back({std::string(p.day()), std::string(p.close()), p.line});
  return out;
}

}  // namespace

TEST_CASE("price buffer: every close comes back as the text added") {
  const std::vector<std::string> closes = {"0",
                                           "0.0",
                                           "0.5",
                                           "0.05",
                                           "7",
                                           "100.50",
                                           "258.99",
                                           "123456.789012",
                                           "10",
                                           "999999999999999999",
                                           "1000000000000000000",
                                           "0.0000001",
                                           "1.1234567",
                                           "007",
                                           ".5",
                                           "5.",
                                           "1e3",
                                           "12345678901234567890.123456789012"};
  PriceBuffer b(1);
  std::uint64_t line = 1;
  std::vector<Read> expected;
  int day = 1;
  for (const auto& c : closes) {
    const std::string date = "2024-01-" + std::string(day < 10 ? "0" : "") + std::to_string(day);
    b.add(0, date, c, ++line);
    expected.push_back({date, c, line});
    ++day;
  }
  CHECK(read_all(b, 0) == expected);
}

TEST_CASE("price buffer: rows come back by day, rows of one day in the order added") {
  PriceBuffer b(2);
  b.add(1, "2024-03-01", "4", 2);
  b.add(0, "2024-03-04", "1", 3);
  b.add(1, "2023-12-29", "3", 4);
  b.add(1, "2024-03-01", "5", 5);
  b.add(0, "2024-03-05", "2", 6);
  b.add(1, "0001-01-01", "9999.5", 7);
  CHECK(read_all(b, 0) == std::vector<Read>{{"2024-03-04", "1", 3}, {"2024-03-05", "2", 6}});
  CHECK(read_all(b, 1) == std::vector<Read>{{"0001-01-01", "9999.5", 7},
                                            {"2023-12-29", "3", 4},
                                            {"2024-03-01", "4", 2},
                                            {"2024-03-01", "5", 5}});
}

TEST_CASE("price buffer: a security added later takes rows like the others") {
  PriceBuffer b(1);
  b.add_security();
  b.add(1, "2024-01-02", "3.25", 9);
  CHECK(b.rows(0) == 0);
  CHECK(b.rows(1) == 1);
  CHECK(read_all(b, 1) == std::vector<Read>{{"2024-01-02", "3.25", 9}});
}

TEST_CASE("price buffer: a day not written YYYY-MM-DD is refused") {
  PriceBuffer b(1);
  CHECK_THROWS_AS(b.add(0, "2024-1-02", "1", 2), std::invalid_argument);
  CHECK_THROWS_AS(b.add(0, "2024-01-0x", "1", 2), std::invalid_argument);
  CHECK(b.empty());
}

TEST_CASE("price buffer: daily closes in date order take under 8 bytes a row") {
  // Ten years of weekdays for 20 securities, interleaved as a daily feed is.
  PriceBuffer b(20);
  std::uint64_t line = 1, rows = 0;
  for (int y = 2010; y < 2020; ++y)
    for (int m = 1; m <= 12; ++m)
      for (int d = 1; d <= 21; ++d) {
        const std::string date = std::to_string(y) + (m < 10 ? "-0" : "-") + std::to_string(m) +
                                 (d < 10 ? "-0" : "-") + std::to_string(d);
        for (std::size_t s = 0; s < 20; ++s, ++rows)
          b.add(s, date, std::to_string(100 + d) + "." + std::to_string(10 + m), ++line);
      }
  CHECK(b.bytes() < 8 * rows);
  CHECK(b.bytes() > 3 * rows);
  b.clear();
  CHECK(b.empty());
  CHECK(b.bytes() == 0);
  CHECK(read_all(b, 3).empty());
}
