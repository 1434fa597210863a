#include "market/close_pack.h"

#include "core/zigzag.h"

namespace keel::market {
namespace {

// Layout, version 1: the byte 1, the count, then per close the days since
// the previous one (the first: since 1970-01-01, zigzag) and the change of the
// mantissa since the previous one, zigzag, shifted left by four bits with the
// scale in them. All numbers are LEB128 varints: closes move little from day
// to day, so most take three or four bytes.
constexpr char kVersion = 1;
constexpr std::int64_t kDayLimit = 1 << 24;  // far beyond any calendar day keel reads

void put(std::string& out, std::uint64_t v) {
  while (v >= 0x80) {
    out.push_back(static_cast<char>((v & 0x7f) | 0x80));
    v >>= 7;
  }
  out.push_back(static_cast<char>(v));
}

bool get(const unsigned char*& p, const unsigned char* end, std::uint64_t& v) {
  v = 0;
  for (int shift = 0; shift < 64; shift += 7) {
    if (p == end) return false;
    const unsigned char b = *p++;
    v |= static_cast<std::uint64_t>(b & 0x7f) << shift;
    if (b < 0x80) return true;
  }
  return false;
}

}  // namespace

bool plain_close(std::string_view s, std::int64_t& mantissa, int& scale) {
  if (s.empty() || s.size() > 18 || s.front() == '.') return false;
  std::int64_t m = 0;
  int sc = -1;
  for (const char c : s) {
    if (c == '.') {
      if (sc >= 0) return false;
      sc = 0;
      continue;
    }
    if (c < '0' || c > '9') return false;
    m = m * 10 + (c - '0');
    if (sc >= 0) ++sc;
  }
  if (sc == 0) return false;
  if (sc > kPackMaxScale || m >= kPackMantissaLimit) return false;
  mantissa = m;
  scale = sc < 0 ? 0 : sc;
  return true;
}

std::string pack_closes(const std::vector<PackedClose>& closes) {
  std::string out;
  out.reserve(8 + closes.size() * 4);
  out.push_back(kVersion);
  put(out, closes.size());
  int day = 0;
  std::int64_t m = 0;
  for (std::size_t i = 0; i < closes.size(); ++i) {
    const PackedClose& c = closes[i];
    const int d = c.day.days_since_epoch();
    put(out, i == 0 ? zigzag(d) : static_cast<std::uint64_t>(d - day));
    put(out, zigzag(c.mantissa - m) << 4 | static_cast<std::uint64_t>(c.scale));
    day = d;
    m = c.mantissa;
  }
  return out;
}

bool unpack_closes(std::string_view packed, std::vector<PackedClose>& out) {
  out.clear();
  const auto* p = reinterpret_cast<const unsigned char*>(packed.data());
  const auto* end = p + packed.size();
  if (p == end || *p++ != kVersion) return false;
  std::uint64_t n = 0;
  // Each close takes at least two bytes: a count beyond that is damage.
  if (!get(p, end, n) || n > packed.size() / 2) return false;
  out.reserve(n);
  std::int64_t day = 0, m = 0;
  for (std::uint64_t i = 0; i < n; ++i) {
    std::uint64_t d = 0, v = 0;
    if (!get(p, end, d) || !get(p, end, v)) return false;
    if (i > 0 && (d == 0 || d > static_cast<std::uint64_t>(kDayLimit)))
      return false;  // before any arithmetic on it
    day = i == 0 ? unzigzag(d) : day + static_cast<std::int64_t>(d);
    m += unzigzag(v >> 4);
    const int scale = static_cast<int>(v & 15);
    if (day < -kDayLimit || day > kDayLimit || m < 0 || m >= kPackMantissaLimit) return false;
    out.push_back(PackedClose{Date::from_days(static_cast<int>(day)), m, scale});
  }
  return p == end;
}

}  // namespace keel::market
