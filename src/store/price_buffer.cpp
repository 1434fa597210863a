#include "store/price_buffer.h"

#include <algorithm>
#include <stdexcept>

#include "core/zigzag.h"

namespace keel::store {
namespace {

// Row layout: three LEB128 varints. The day: the change of YYYYMMDD since the
// security's previous row (the first: since 0), zigzag. The close: mantissa
// x 8 + scale (scale 0 to 6), or kAside + 8 x its index among the closes
// kept aside. The line: the change since the security's previous row, zigzag.
constexpr std::uint64_t kAside = 7;
constexpr std::size_t kMaxScale = 6;
constexpr std::size_t kMaxDigits = 18;

// Writes v at `out`; gives the end. At most 10 bytes.
char* put_varint(char* out, std::uint64_t v) {
  for (; v >= 0x80; v >>= 7) *out++ = static_cast<char>((v & 0x7f) | 0x80);
  *out++ = static_cast<char>(v);
  return out;
}

// Reads what put_varint() wrote; the buffer is this program's own.
std::uint64_t read_varint(const unsigned char*& p) {
  std::uint64_t v = *p & 0x7f;
  for (int shift = 7; *p++ & 0x80; shift += 7) v |= static_cast<std::uint64_t>(*p & 0x7f) << shift;
  return v;
}

bool is_digit(char c) {
  return c >= '0' && c <= '9';
}

std::uint32_t ymd_of(std::string_view d) {
  if (d.size() != 10 || d[4] != '-' || d[7] != '-')
    throw std::invalid_argument("PriceBuffer: a day must be written YYYY-MM-DD");
  std::uint32_t ymd = 0;
  for (const char c : d) {
    if (c == '-') continue;
    if (!is_digit(c)) throw std::invalid_argument("PriceBuffer: a day must be written YYYY-MM-DD");
    ymd = ymd * 10 + static_cast<std::uint32_t>(c - '0');
  }
  return ymd;
}

// The close as mantissa x 8 + scale, when the text is what rendering that
// gives back exactly: digits without a leading zero (but a lone "0"), then
// optionally a point and 1 to kMaxScale digits; kMaxDigits digits at most.
bool pack_close(std::string_view s, std::uint64_t& packed) {
  const std::size_t point = s.find('.');
  const std::string_view whole = s.substr(0, point);
  const std::string_view part =
      point == std::string_view::npos ? std::string_view() : s.substr(point + 1);
  if (whole.empty() || (whole.size() > 1 && whole.front() == '0')) return false;
  if (point != std::string_view::npos && (part.empty() || part.size() > kMaxScale)) return false;
  if (whole.size() + part.size() > kMaxDigits) return false;
  std::uint64_t mantissa = 0;
  for (const std::string_view run : {whole, part})
    for (const char c : run) {
      if (!is_digit(c)) return false;
      mantissa = mantissa * 10 + static_cast<std::uint64_t>(c - '0');
    }
  packed = mantissa * 8 + part.size();
  return true;
}

void write_date(std::uint32_t ymd, std::array<char, 11>& out) {
  for (const int i : {9, 8, 6, 5, 3, 2, 1, 0}) {
    out[static_cast<std::size_t>(i)] = static_cast<char>('0' + ymd % 10);
    ymd /= 10;
  }
  out[4] = out[7] = '-';
  out[10] = '\0';
}

}  // namespace

void PriceBuffer::add(std::size_t sec, std::string_view date, std::string_view close,
                      std::uint64_t line) {
  Rows& r = rows_[sec];
  const std::uint32_t ymd = ymd_of(date);
  std::uint64_t packed = 0;
  if (!pack_close(close, packed)) {
    packed = kAside + 8 * aside_.size();
    aside_.emplace_back(close);
    bytes_ += sizeof(std::string) + aside_.back().capacity();
  }
  char row[30];
  char* end = put_varint(row, zigzag(static_cast<std::int64_t>(ymd) - r.last_ymd));
  end = put_varint(end, packed);
  end = put_varint(end, zigzag(static_cast<std::int64_t>(line - r.last_line)));
  const auto n = static_cast<std::size_t>(end - row);
  if (r.count == 0 || r.bytes.size() + n > r.bytes.capacity()) {
    // Grow by a quarter, not the library's double: less memory held idle.
    // (The first row reserves too, so that bytes_ counts every byte held.)
    const std::size_t before = r.count == 0 ? 0 : r.bytes.capacity();
    r.bytes.reserve(std::max<std::size_t>(64, before + before / 4 + n));
    bytes_ += r.bytes.capacity() - before;
  }
  r.bytes.append(row, n);
  if (r.count > 0 && ymd <= r.last_ymd) r.ascending = false;
  r.last_ymd = ymd;
  r.last_line = line;
  ++r.count;
  ++count_;
}

void PriceBuffer::clear() {
  for (Rows& r : rows_) r = Rows{};
  aside_ = {};
  bytes_ = 0;
  count_ = 0;
}

PriceBuffer::Reader::Reader(const PriceBuffer& buffer, std::size_t sec) : buffer_(buffer) {
  const Rows& r = buffer.rows_[sec];
  p_ = reinterpret_cast<const unsigned char*>(r.bytes.data());
  end_ = p_ + r.bytes.size();
  if (r.ascending) return;
  sorted_.reserve(r.count);
  while (p_ != end_) {
    ymd_ = static_cast<std::uint32_t>(ymd_ + unzigzag(read_varint(p_)));
    const std::uint64_t close = read_varint(p_);
    line_ += static_cast<std::uint64_t>(unzigzag(read_varint(p_)));
    sorted_.push_back({ymd_, close, line_});
  }
  std::stable_sort(sorted_.begin(), sorted_.end(),
                   [](const Packed& a, const Packed& b) { return a.ymd < b.ymd; });
}

bool PriceBuffer::Reader::next(BufferedPrice& row) {
  std::uint64_t close = 0;
  if (!sorted_.empty()) {
    if (next_ == sorted_.size()) return false;
    const Packed& s = sorted_[next_++];
    row.ymd = s.ymd;
    row.line = s.line;
    close = s.close;
  } else {
    if (p_ == end_) return false;
    ymd_ = static_cast<std::uint32_t>(ymd_ + unzigzag(read_varint(p_)));
    close = read_varint(p_);
    line_ += static_cast<std::uint64_t>(unzigzag(read_varint(p_)));
    row.ymd = ymd_;
    row.line = line_;
  }
  write_date(row.ymd, row.date);
  unpack(close, row);
  return true;
}

void PriceBuffer::Reader::unpack(std::uint64_t close, BufferedPrice& row) const {
  const auto scale = static_cast<std::size_t>(close & 7);
  if (scale == kAside) {
    const std::string& text = buffer_.aside_[close >> 3];
    row.aside = text.c_str();
    row.close_size = static_cast<std::uint32_t>(text.size());
    return;
  }
  row.aside = nullptr;
  // The digits, right-aligned, then moved to the front with the point.
  char tmp[kMaxDigits + kMaxScale + 2];
  char* const end = tmp + sizeof tmp;
  char* q = end;
  std::uint64_t m = close >> 3;
  do {
    *--q = static_cast<char>('0' + m % 10);
    m /= 10;
  } while (m != 0);
  while (static_cast<std::size_t>(end - q) < scale + 1) *--q = '0';
  const auto n = static_cast<std::size_t>(end - q);
  char* out = row.digits.data();
  std::copy(q, end - scale, out);
  out += n - scale;
  if (scale > 0) {
    *out++ = '.';
    out = std::copy(end - scale, end, out);
  }
  *out = '\0';
  row.close_size = static_cast<std::uint32_t>(out - row.digits.data());
}

}  // namespace keel::store
