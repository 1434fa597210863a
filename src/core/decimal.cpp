#include "core/decimal.h"

#include <fmt/format.h>

#include <algorithm>
#include <boost/multiprecision/cpp_int.hpp>
#include <limits>
#include <new>
#include <stdexcept>
#include <utility>

#include "core/error.h"
#include "core/text.h"

namespace keel {
namespace {

using Int = boost::multiprecision::cpp_int;

// 10^0 .. 10^18, every power of ten that fits a long long.
constexpr long long kPow10[] = {1,
                                10,
                                100,
                                1000,
                                10000,
                                100000,
                                1000000,
                                10000000,
                                100000000,
                                1000000000,
                                10000000000,
                                100000000000,
                                1000000000000,
                                10000000000000,
                                100000000000000,
                                1000000000000000,
                                10000000000000000,
                                100000000000000000,
                                1000000000000000000};

Int pow10(int n) {
  Int result = 1;
  static const Int kTen18{kPow10[18]};
  while (n >= 18) {
    result *= kTen18;
    n -= 18;
  }
  return result * kPow10[n];
}

// Divides `value` by 10^drop and rounds the quotient half-to-even.
Int round_half_even(const Int& value, int drop) {
  if (drop <= 0) return value;
  const Int divisor = pow10(drop);
  Int quotient = value / divisor;   // truncates toward zero
  Int remainder = value % divisor;  // same sign as value
  if (remainder.is_zero()) return quotient;
  const Int twice = boost::multiprecision::abs(remainder) * 2;
  const int direction = value.sign();
  if (twice > divisor || (twice == divisor && (quotient % 2) != 0)) quotient += direction;
  return quotient;
}

__extension__ typedef __int128 Wide;  // GCC and Clang; -Wpedantic wants the marker
__extension__ typedef unsigned __int128 UWide;

// Most ledger numbers fit a machine word. These fast paths give exactly what
// the general cpp_int code gives, only without its generic multi-limb work.

// The value of `v` when it lies in [-(2^63 - 1), 2^63 - 1].
bool small_value(const Int& v, long long& out) {
  const auto& b = v.backend();
  if (b.size() != 1) return false;
  const unsigned long long m = *b.limbs();
  if (m > static_cast<unsigned long long>(std::numeric_limits<long long>::max())) return false;
  out = b.sign() ? -static_cast<long long>(m) : static_cast<long long>(m);
  return true;
}

// a * 10^(scale - a_scale) and b * 10^(scale - b_scale) as 128-bit integers,
// when both mantissas are small and the shifts are at most 18 digits: then
// each product is below 2^63 * 10^18 < 2^123, and a sum or difference of two
// fits as well.
bool small_aligned(const Int& a, int a_scale, const Int& b, int b_scale, Wide& x, Wide& y) {
  long long sa = 0, sb = 0;
  if (!small_value(a, sa) || !small_value(b, sb)) return false;
  const int scale = std::max(a_scale, b_scale);
  if (scale - a_scale > 18 || scale - b_scale > 18) return false;
  x = static_cast<Wide>(sa) * kPow10[scale - a_scale];
  y = static_cast<Wide>(sb) * kPow10[scale - b_scale];
  return true;
}

// `v` as an Int: from a long long when it fits, else through two limbs.
Int from_int128(Wide v) {
  if (v >= std::numeric_limits<long long>::min() && v <= std::numeric_limits<long long>::max())
    return Int(static_cast<long long>(v));
  const bool negative = v < 0;
  const UWide m = negative ? -static_cast<UWide>(v) : static_cast<UWide>(v);
  Int out = Int(static_cast<unsigned long long>(m >> 64));
  out <<= 64;
  out += static_cast<unsigned long long>(m);
  return negative ? Int(-out) : out;
}

}  // namespace

static_assert(sizeof(Int) == 32 && alignof(Int) <= 16,
              "Decimal::kMantissaBytes and its alignment must fit cpp_int");

auto& Decimal::mantissa() {
  return *std::launder(reinterpret_cast<Int*>(storage_));
}

const auto& Decimal::mantissa() const {
  return *std::launder(reinterpret_cast<const Int*>(storage_));
}

Decimal::Decimal() {
  new (storage_) Int();
}

Decimal::Decimal(long long whole) {
  new (storage_) Int(whole);
}

Decimal::Decimal(const Decimal& other) : scale_(other.scale_) {
  new (storage_) Int(other.mantissa());
}

Decimal::Decimal(Decimal&& other) noexcept : scale_(other.scale_) {
  new (storage_) Int(std::move(other.mantissa()));
}

Decimal& Decimal::operator=(const Decimal& other) {
  mantissa() = other.mantissa();
  scale_ = other.scale_;
  return *this;
}

Decimal& Decimal::operator=(Decimal&& other) noexcept {
  mantissa() = std::move(other.mantissa());
  scale_ = other.scale_;
  return *this;
}

Decimal::~Decimal() {
  mantissa().~Int();
}

Decimal Decimal::from_mantissa(auto&& value, int scale) {
  Decimal out;
  out.mantissa() = std::forward<decltype(value)>(value);
  out.scale_ = scale;
  out.normalize();
  return out;
}

int Decimal::sign() const {
  return mantissa().sign();
}

bool Decimal::is_zero() const {
  return mantissa().is_zero();
}

Decimal Decimal::scaled(long long mantissa, int scale) {
  if (scale < 0 || scale > kMaxScale)
    throw std::invalid_argument(fmt::format("Decimal::scaled: scale {} out of range", scale));
  return from_mantissa(Int(mantissa), scale);
}

void Decimal::normalize() {
  if (mantissa().is_zero()) {
    scale_ = 0;
    return;
  }
  long long small = 0;
  if (scale_ > 0 && small_value(mantissa(), small)) {
    int scale = scale_;
    while (scale > 0 && small % 10 == 0) {
      small /= 10;
      --scale;
    }
    if (scale != scale_) {
      mantissa() = small;
      scale_ = scale;
    }
    return;
  }
  while (scale_ > 0) {
    Int quotient, remainder;
    boost::multiprecision::divide_qr(mantissa(), Int(10), quotient, remainder);
    if (!remainder.is_zero()) break;
    mantissa() = std::move(quotient);
    --scale_;
  }
}

auto Decimal::scaled_to(int scale) const {
  return scale == scale_ ? mantissa() : Int(mantissa() * pow10(scale - scale_));
}

Decimal Decimal::parse(std::string_view text) {
  std::string why;
  auto value = parse_text(text, why);
  if (!value) throw InputError(why);
  return *value;
}

std::optional<Decimal> Decimal::try_parse(std::string_view text) noexcept {
  try {
    std::string why;
    return parse_text(text, why);
  } catch (...) {
    return std::nullopt;
  }
}

std::optional<Decimal> Decimal::parse_text(std::string_view text, std::string& why) {
  // The common shape, [-]digits[.digits] with at most 18 digits in all, read
  // straight into a machine word; anything else takes the general path below.
  if (text.size() <= 20) {
    std::size_t i = text.empty() || text[0] != '-' ? 0 : 1;
    long long value = 0;
    int digits = 0;
    int scale = -1;  // -1: no point seen
    for (; i < text.size(); ++i) {
      const char c = text[i];
      if (c >= '0' && c <= '9') {
        if (digits == 18) break;  // a 19th digit could overflow; the general path takes it
        value = value * 10 + (c - '0');
        ++digits;
        if (scale >= 0) ++scale;
      } else if (c == '.' && scale < 0) {
        scale = 0;
      } else {
        break;
      }
    }
    if (i == text.size() && digits > 0 && digits <= 18)
      return from_mantissa(Int(text[0] == '-' ? -value : value), std::max(scale, 0));
  }
  auto fail = [&](std::string_view reason) {
    // printable(): the text may hold any byte, NUL included, and what() is a C string.
    why = fmt::format("'{}' is not a decimal number: {}", printable(text), reason);
    return std::nullopt;
  };
  std::size_t i = 0;
  bool negative = false;
  if (i < text.size() && (text[i] == '+' || text[i] == '-')) {
    negative = text[i] == '-';
    ++i;
  }
  std::string digits;
  int scale = 0;
  bool seen_point = false;
  bool any_digit = false;
  for (; i < text.size(); ++i) {
    const char c = text[i];
    if (c >= '0' && c <= '9') {
      any_digit = true;
      if (!digits.empty() || c != '0') digits.push_back(c);
      if (seen_point) ++scale;
    } else if (c == '.' && !seen_point) {
      seen_point = true;
    } else {
      break;
    }
  }
  if (!any_digit) return fail("expected digits");
  long exponent = 0;
  if (i < text.size() && (text[i] == 'e' || text[i] == 'E')) {
    ++i;
    bool exp_negative = false;
    if (i < text.size() && (text[i] == '+' || text[i] == '-')) exp_negative = text[i++] == '-';
    if (i == text.size()) return fail("exponent has no digits");
    for (; i < text.size() && text[i] >= '0' && text[i] <= '9'; ++i) {
      exponent = exponent * 10 + (text[i] - '0');
      if (exponent > 1000) return fail("exponent is too large");
    }
    if (exp_negative) exponent = -exponent;
  }
  if (i != text.size())
    return fail(fmt::format("unexpected character '{}'", printable(text.substr(i, 1))));
  // Trailing fractional zeros carry no value; drop them before the size checks.
  while (scale > 0 && !digits.empty() && digits.back() == '0') {
    digits.pop_back();
    --scale;
  }
  if (digits.empty()) return Decimal();
  long effective_scale = scale - exponent;
  if (effective_scale < 0) {
    digits.append(static_cast<std::size_t>(-effective_scale), '0');
    effective_scale = 0;
  }
  if (static_cast<int>(digits.size()) > Decimal::kMaxDigits)
    return fail(fmt::format("more than {} significant digits", Decimal::kMaxDigits));
  if (effective_scale > Decimal::kMaxScale)
    return fail(fmt::format("more than {} digits after the point", Decimal::kMaxScale));
  Int mantissa;
  if (digits.size() <= 18) {
    long long value = 0;
    for (const char c : digits) value = value * 10 + (c - '0');
    mantissa = negative ? -value : value;
  } else {
    mantissa = Int(digits);
    if (negative) mantissa = -mantissa;
  }
  return from_mantissa(std::move(mantissa), static_cast<int>(effective_scale));
}

std::string Decimal::str() const {
  long long small = 0;
  std::string digits = small_value(mantissa(), small)
                           ? std::to_string(small < 0 ? -small : small)
                           : Int(boost::multiprecision::abs(mantissa())).str();
  std::string out;
  if (is_negative()) out.push_back('-');
  if (scale_ == 0) return out + digits;
  if (static_cast<int>(digits.size()) <= scale_)
    digits.insert(0, static_cast<std::size_t>(scale_ - static_cast<int>(digits.size()) + 1), '0');
  out += digits.substr(0, digits.size() - static_cast<std::size_t>(scale_));
  out.push_back('.');
  out += digits.substr(digits.size() - static_cast<std::size_t>(scale_));
  return out;
}

std::string Decimal::fixed(int places) const {
  const Decimal r = rounded(places);
  std::string digits = Int(boost::multiprecision::abs(r.scaled_to(places))).str();
  if (places > 0 && static_cast<int>(digits.size()) <= places)
    digits.insert(0, static_cast<std::size_t>(places - static_cast<int>(digits.size()) + 1), '0');
  std::string out = r.is_negative() ? "-" : "";
  if (places <= 0) return out + digits;
  out += digits.substr(0, digits.size() - static_cast<std::size_t>(places));
  out.push_back('.');
  out += digits.substr(digits.size() - static_cast<std::size_t>(places));
  return out;
}

namespace {

// q = x / y rounded half-to-even, for y > 0.
Wide divide_half_even(Wide x, Wide y) {
  Wide q = x / y;
  const Wide r = x % y;  // same sign as x
  const Wide twice = (r < 0 ? -r : r) * 2;
  if (twice > y || (twice == y && q % 2 != 0)) q += x < 0 ? -1 : 1;
  return q;
}

}  // namespace

Decimal Decimal::rounded(int places) const {
  if (scale_ <= places) return *this;
  long long small = 0;
  if (places >= 0 && scale_ - places <= 18 && small_value(mantissa(), small))
    return from_mantissa(from_int128(divide_half_even(small, kPow10[scale_ - places])), places);
  return from_mantissa(round_half_even(mantissa(), scale_ - places), places);
}

Decimal Decimal::truncated(int places) const {
  if (scale_ <= places) return *this;
  long long small = 0;
  if (places >= 0 && scale_ - places <= 18 && small_value(mantissa(), small))
    return from_mantissa(Int(small / kPow10[scale_ - places]), places);
  return from_mantissa(Int(mantissa() / pow10(scale_ - places)), places);
}

Decimal Decimal::floored(int places) const {
  const Decimal t = truncated(places);
  return (is_negative() && t != *this) ? t - from_mantissa(Int(1), places) : t;
}

Decimal Decimal::divide(const Decimal& numerator, const Decimal& denominator, int places) {
  if (denominator.is_zero()) throw InputError("division by zero");
  // Machine words when both sides fit: a mantissa below 2^63 times 10^18 at
  // most stays below 2^123, so twice a remainder fits too. The same quotient
  // as the general path below.
  long long a = 0, b = 0;
  if (places >= 0 && denominator.scale_ + places <= 18 && numerator.scale_ <= 18 &&
      small_value(numerator.mantissa(), a) && small_value(denominator.mantissa(), b)) {
    Wide n = static_cast<Wide>(a) * kPow10[denominator.scale_ + places];
    Wide d = static_cast<Wide>(b) * kPow10[numerator.scale_];
    if (d < 0) n = -n, d = -d;
    return from_mantissa(from_int128(divide_half_even(n, d)), places);
  }
  // (n / 10^a) / (d / 10^b) at `places` digits = n * 10^(b + places) / (d * 10^a).
  const Int n = numerator.mantissa() * pow10(denominator.scale_ + places);
  const Int d = denominator.mantissa() * pow10(numerator.scale_);
  Int quotient, remainder;
  boost::multiprecision::divide_qr(n, d, quotient, remainder);
  if (!remainder.is_zero()) {
    const Int twice = boost::multiprecision::abs(remainder) * 2;
    const Int magnitude = boost::multiprecision::abs(d);
    const int direction = n.sign() * d.sign();
    if (twice > magnitude || (twice == magnitude && (quotient % 2) != 0)) quotient += direction;
  }
  return from_mantissa(std::move(quotient), places);
}

double Decimal::to_double() const {
  // A mantissa below 2^53 and a scale up to 22 are both exact doubles, so one
  // IEEE division rounds the quotient correctly: the same double as the text
  // route (Clinger 1990, "How to Read Floating Point Numbers Accurately").
  long long small = 0;
  constexpr long long kExact = 1LL << 53;
  if (scale_ <= 22 && small_value(mantissa(), small) && small < kExact && small > -kExact) {
    static constexpr double kTens[] = {1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,
                                       1e8,  1e9,  1e10, 1e11, 1e12, 1e13, 1e14, 1e15,
                                       1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};
    return static_cast<double>(small) / kTens[scale_];
  }
  // Via text keeps the conversion correctly rounded for every magnitude.
  return std::stod(str());
}

Decimal Decimal::operator-() const {
  return from_mantissa(Int(-mantissa()), scale_);
}

Decimal operator+(const Decimal& a, const Decimal& b) {
  const int scale = std::max(a.scale_, b.scale_);
  Wide x = 0, y = 0;
  if (small_aligned(a.mantissa(), a.scale_, b.mantissa(), b.scale_, x, y))
    return Decimal::from_mantissa(from_int128(x + y), scale);
  return Decimal::from_mantissa(Int(a.scaled_to(scale) + b.scaled_to(scale)), scale);
}

Decimal operator-(const Decimal& a, const Decimal& b) {
  const int scale = std::max(a.scale_, b.scale_);
  Wide x = 0, y = 0;
  if (small_aligned(a.mantissa(), a.scale_, b.mantissa(), b.scale_, x, y))
    return Decimal::from_mantissa(from_int128(x - y), scale);
  return Decimal::from_mantissa(Int(a.scaled_to(scale) - b.scaled_to(scale)), scale);
}

Decimal operator*(const Decimal& a, const Decimal& b) {
  long long x = 0, y = 0;
  if (small_value(a.mantissa(), x) && small_value(b.mantissa(), y))
    return Decimal::from_mantissa(from_int128(static_cast<Wide>(x) * y), a.scale_ + b.scale_);
  return Decimal::from_mantissa(Int(a.mantissa() * b.mantissa()), a.scale_ + b.scale_);
}

bool operator==(const Decimal& a, const Decimal& b) {
  // Normalized values compare equal only when both parts match.
  return a.scale_ == b.scale_ && a.mantissa() == b.mantissa();
}

std::strong_ordering operator<=>(const Decimal& a, const Decimal& b) {
  Wide sx = 0, sy = 0;
  if (small_aligned(a.mantissa(), a.scale_, b.mantissa(), b.scale_, sx, sy)) return sx <=> sy;
  const int scale = std::max(a.scale_, b.scale_);
  const auto x = a.scaled_to(scale);
  const auto y = b.scaled_to(scale);
  if (x < y) return std::strong_ordering::less;
  if (x > y) return std::strong_ordering::greater;
  return std::strong_ordering::equal;
}

}  // namespace keel
