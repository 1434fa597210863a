// PriceBuffer: the closes of a bulk import, held per security in a compact
// form until they are written, and given back in the table's key order.
//
// Contract
//  - Securities are handles 0..n-1 (MarketWriter's); add_security() adds one.
//  - add() keeps one row: a day written YYYY-MM-DD, a close as text, and the
//    row's line in its file. A close of the form the ledger stores (digits,
//    optionally a point and digits, no leading zero but a lone "0", at most
//    18 digits and 6 after the point) takes a few bytes; any other text is
//    kept as it is. A day of another shape throws std::invalid_argument:
//    callers pass canonical dates.
//  - Reader gives one security's rows ordered by day, rows of the same day in
//    the order they were added, each with its text exactly as added. A
//    security whose days rose strictly as they were added is read in place;
//    any other is decoded and sorted when its reader is made.
//  - bytes() is the memory the rows hold (about 6 bytes a row for daily
//    closes in date order); clear() gives it all back.
//  - Nothing here throws but std::bad_alloc and the error above.
#pragma once

#include <array>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace keel::store {

// One buffered row, with its text in place (both texts end with a NUL).
struct BufferedPrice {
  std::uint64_t line = 0;
  std::uint32_t ymd = 0;  // the day as the number YYYYMMDD
  std::array<char, 11> date{};
  std::array<char, 24> digits{};  // the close, unless it is kept aside
  const char* aside = nullptr;    // the close, when kept aside
  std::uint32_t close_size = 0;

  std::string_view day() const { return {date.data(), 10}; }
  const char* close_text() const { return aside ? aside : digits.data(); }
  std::string_view close() const { return {close_text(), close_size}; }
};

class PriceBuffer {
 public:
  explicit PriceBuffer(std::size_t securities) : rows_(securities) {}
  void add_security() { rows_.emplace_back(); }

  void add(std::size_t sec, std::string_view date, std::string_view close, std::uint64_t line);
  bool empty() const { return count_ == 0; }
  std::uint64_t rows(std::size_t sec) const { return rows_[sec].count; }
  std::size_t bytes() const { return bytes_; }
  void clear();

  class Reader {
   public:
    bool next(BufferedPrice& row);

   private:
    friend class PriceBuffer;
    struct Packed {
      std::uint32_t ymd;
      std::uint64_t close;
      std::uint64_t line;
    };
    Reader(const PriceBuffer& buffer, std::size_t sec);
    void unpack(std::uint64_t close, BufferedPrice& row) const;

    const PriceBuffer& buffer_;
    const unsigned char* p_ = nullptr;
    const unsigned char* end_ = nullptr;
    std::uint32_t ymd_ = 0;
    std::uint64_t line_ = 0;
    std::vector<Packed> sorted_;  // for a security added out of order
    std::size_t next_ = 0;
  };
  // Valid while the buffer is not changed.
  Reader read(std::size_t sec) const { return Reader(*this, sec); }

 private:
  struct Rows {
    std::string bytes;  // per row: day, close and line as varints
    std::uint32_t last_ymd = 0;
    std::uint64_t last_line = 0;
    std::uint64_t count = 0;
    bool ascending = true;  // each day later than the one before
  };
  std::vector<Rows> rows_;
  std::vector<std::string> aside_;  // closes of another form
  std::size_t bytes_ = 0;
  std::uint64_t count_ = 0;
};

}  // namespace keel::store
