#include "core/decimal.h"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <bit>
#include <boost/multiprecision/cpp_int.hpp>
#include <cmath>
#include <limits>
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

// The integer of a 128-bit magnitude and a sign, its two limbs written in
// place (no shifts or additions of multi-precision values).
Int int_of(UWide magnitude, bool negative) {
  Int out;
  auto& b = out.backend();
  b.resize(2, 2);
  b.limbs()[0] = static_cast<unsigned long long>(magnitude);
  b.limbs()[1] = static_cast<unsigned long long>(magnitude >> 64);
  b.normalize();
  b.sign(negative && magnitude != 0);
  return out;
}

constexpr long long kSmallMax = std::numeric_limits<long long>::max();

// Mantissas past a machine word but below 2^127 are worked on in 128 bits:
// the same results as the multi-precision code, without its generic work.
constexpr Wide kWideMax = static_cast<Wide>(~static_cast<UWide>(0) >> 1);  // 2^127 - 1

// 10^0 .. 10^38, every power of ten below 2^127.
constexpr auto kWideTens = [] {
  std::array<Wide, 39> tens{};
  Wide p = 1;
  for (std::size_t i = 0; i < tens.size(); ++i) {
    tens[i] = p;
    if (i + 1 < tens.size()) p *= 10;
  }
  return tens;
}();

// The value of a multi-precision `v` when its magnitude is below 2^127.
bool wide_value(const Int& v, Wide& out) {
  const auto& b = v.backend();
  static_assert(sizeof(*b.limbs()) == 8, "cpp_int limbs of 64 bits");
  if (b.size() > 2) return false;
  UWide m = *b.limbs();
  if (b.size() == 2) m |= static_cast<UWide>(b.limbs()[1]) << 64;
  if (m > static_cast<UWide>(kWideMax)) return false;
  out = b.sign() ? -static_cast<Wide>(m) : static_cast<Wide>(m);
  return true;
}

// (2^127 - 1) / 10^k: the largest magnitude 10^k multiplies within 128 bits.
constexpr auto kWideShiftLimits = [] {
  std::array<UWide, kWideTens.size()> limits{};
  for (std::size_t i = 0; i < limits.size(); ++i)
    limits[i] = static_cast<UWide>(kWideMax) / static_cast<UWide>(kWideTens[i]);
  return limits;
}();

// x * 10^shift when it stays within +-(2^127 - 1): a comparison with the
// limit above, then a multiplication that cannot overflow.
bool shift_wide(Wide& x, int shift) {
  if (shift < 0 || shift > 38) return false;
  const auto k = static_cast<std::size_t>(shift);
  const UWide magnitude = x < 0 ? -static_cast<UWide>(x) : static_cast<UWide>(x);
  if (magnitude > kWideShiftLimits[k]) return false;
  x *= kWideTens[k];
  return true;
}

// Trailing zeros without a division (Granlund and Montgomery, "Division by
// invariant integers using multiplication", PLDI 1994, section 9; Warren,
// "Hacker's Delight", 10-17): with i the inverse of 5 modulo 2^N, u is a
// multiple of 10 exactly when rotr(u x i, 1) <= (2^N - 1) / 10, and that
// rotation is then u / 10. One multiplication a step, in 64 or 128 bits.
constexpr unsigned long long kInverse5 = 0xCCCCCCCCCCCCCCCDULL;
static_assert(kInverse5 * 5 == 1, "the inverse of 5 modulo 2^64");
constexpr UWide kInverse5Wide = (static_cast<UWide>(0xCCCCCCCCCCCCCCCCULL) << 64) | kInverse5;
static_assert(kInverse5Wide * 5 == 1, "the inverse of 5 modulo 2^128");

// u / 10 in `u` when u is a multiple of 10 (else false, u unchanged).
bool tenth(unsigned long long& u) {
  const unsigned long long q = std::rotr(u * kInverse5, 1);
  if (q > std::numeric_limits<unsigned long long>::max() / 10) return false;
  u = q;
  return true;
}

bool tenth(UWide& u) {
  const UWide p = u * kInverse5Wide;
  const UWide q = (p >> 1) | (p << 127);
  if (q > ~static_cast<UWide>(0) / 10) return false;
  u = q;
  return true;
}

// |x| / y and |x| % y for y > 0 below 2^64: one machine division when the
// quotient fits a word (x86-64's divq), a library call otherwise.
UWide divide_magnitude(UWide u, unsigned long long y, unsigned long long& remainder) {
#if defined(__x86_64__)
  const auto high = static_cast<unsigned long long>(u >> 64);
  if (high < y) {
    unsigned long long q = 0;
    __asm__("divq %[y]"
            : "=a"(q), "=d"(remainder)
            : [y] "r"(y), "a"(static_cast<unsigned long long>(u)), "d"(high));
    return q;
  }
#endif
  remainder = static_cast<unsigned long long>(u % y);
  return u / y;
}

// x / y rounded half-to-even, for y > 0, in machine words.
long long round_divide(long long x, long long y) {
  long long q = x / y;
  const long long r = x % y;  // same sign as x
  const long long below = r < 0 ? -r : r;
  const long long above = y - below;  // both distances to a multiple of y
  if (below > above || (below == above && (q & 1) != 0)) q += x < 0 ? -1 : 1;
  return q;
}

// x / y rounded half-to-even, for y > 0: the magnitude's quotient rounded,
// then x's sign.
Wide round_divide(Wide x, Wide y) {
  const UWide u = x < 0 ? -static_cast<UWide>(x) : static_cast<UWide>(x);
  UWide q = 0, below = 0;
  if (y <= static_cast<Wide>(std::numeric_limits<unsigned long long>::max())) {
    unsigned long long r = 0;
    q = divide_magnitude(u, static_cast<unsigned long long>(y), r);
    below = r;
  } else {
    q = u / static_cast<UWide>(y);
    below = u - q * static_cast<UWide>(y);
  }
  const UWide above = static_cast<UWide>(y) - below;
  if (below > above || (below == above && (q & 1) != 0)) ++q;
  return x < 0 ? -static_cast<Wide>(q) : static_cast<Wide>(q);
}

}  // namespace

static_assert(sizeof(Decimal) == 16, "a Decimal is a machine word, a scale and a flag");

auto& Decimal::mantissa() {
  return *static_cast<Int*>(big_mantissa_);
}

const auto& Decimal::mantissa() const {
  return *static_cast<const Int*>(big_mantissa_);
}

auto Decimal::as_int() const {
  return big_ ? mantissa() : Int(small_);
}

void Decimal::set_lowest() {
  big_mantissa_ = new Int(std::numeric_limits<long long>::min());
  big_ = true;
}

void Decimal::copy_big(const Decimal& other) {
  big_mantissa_ = new Int(other.mantissa());
  big_ = true;
}

void Decimal::move_big(Decimal& other) noexcept {
  // The mantissa changes hands; the moved-from value becomes a plain zero, so
  // it keeps one representation.
  big_mantissa_ = other.big_mantissa_;
  big_ = true;
  other.big_ = false;
  other.small_ = 0;
  other.scale_ = 0;
}

Decimal& Decimal::assign_big(const Decimal& other) {
  if (this == &other) return *this;
  if (other.big_) {
    if (big_)
      mantissa() = other.mantissa();
    else
      copy_big(other);
  } else {
    destroy_big();
    small_ = other.small_;
  }
  scale_ = other.scale_;
  return *this;
}

Decimal& Decimal::move_assign_big(Decimal& other) noexcept {
  if (this == &other) return *this;
  const int scale = other.scale_;  // before `other` becomes a plain zero
  if (other.big_) {
    if (big_) destroy_big();
    move_big(other);
  } else {
    destroy_big();
    small_ = other.small_;
  }
  scale_ = scale;
  return *this;
}

void Decimal::destroy_big() noexcept {
  delete static_cast<Int*>(big_mantissa_);
  big_ = false;
  small_ = 0;
}

int Decimal::big_sign() const {
  return mantissa().sign();
}

void Decimal::set_int(auto&& value) {
  long long small = 0;
  if (small_value(value, small)) {
    if (big_) destroy_big();
    small_ = small;
  } else if (big_) {
    mantissa() = std::forward<decltype(value)>(value);
  } else {
    big_mantissa_ = new Int(std::forward<decltype(value)>(value));
    big_ = true;
  }
}

Decimal Decimal::from_mantissa(auto&& value, int scale) {
  Decimal out;
  out.set_int(std::forward<decltype(value)>(value));
  out.scale_ = scale;
  out.normalize();
  return out;
}

// a and b as 128-bit mantissas at the larger of their scales, when both
// mantissas and the shifted one stay within +-(2^127 - 1).
bool Decimal::small_aligned(const Decimal& a, const Decimal& b, Wide& x, Wide& y) {
  if (a.big_ ? !wide_value(a.mantissa(), x) : (x = a.small_, false)) return false;
  if (b.big_ ? !wide_value(b.mantissa(), y) : (y = b.small_, false)) return false;
  if (a.scale_ == b.scale_) return true;
  return a.scale_ < b.scale_ ? shift_wide(x, b.scale_ - a.scale_)
                             : shift_wide(y, a.scale_ - b.scale_);
}

Decimal Decimal::strip_word(long long mantissa, int scale) {
  if (mantissa == 0) return Decimal();
  const bool negative = mantissa < 0;
  unsigned long long u = negative ? 0 - static_cast<unsigned long long>(mantissa)
                                  : static_cast<unsigned long long>(mantissa);
  while (scale > 0 && tenth(u)) --scale;
  const auto m = static_cast<long long>(u);  // below 2^63: |mantissa| was
  return word(negative ? -m : m, scale);
}

Decimal Decimal::from_wide(Wide value, int scale) {
  if (value >= -kSmallMax && value <= kSmallMax)
    return from_word(static_cast<long long>(value), scale);
  return from_past_word(value, scale);
}

// Kept apart from from_wide() so that its word path does not pay for this
// frame.
[[gnu::noinline]] Decimal Decimal::from_past_word(Wide value, int scale) {
  // Trailing zeros dropped in 128 bits; what is left is normalized.
  const bool negative = value < 0;
  UWide u = negative ? -static_cast<UWide>(value) : static_cast<UWide>(value);
  while (scale > 0 && tenth(u)) --scale;
  Decimal out;
  if (u <= static_cast<UWide>(kSmallMax)) {
    const auto m = static_cast<long long>(u);
    out.small_ = negative ? -m : m;
  } else {
    out.set_int(int_of(u, negative));
  }
  out.scale_ = scale;
  return out;
}

Decimal Decimal::scaled(long long mantissa, int scale) {
  if (scale < 0 || scale > kMaxScale)
    throw std::invalid_argument(fmt::format("Decimal::scaled: scale {} out of range", scale));
  return from_wide(mantissa, scale);
}

Decimal Decimal::of_double(double x, int places) {
  if (places < 0 || places > 18)
    throw std::invalid_argument(fmt::format("Decimal::of_double: places {} out of range", places));
  // x = m x 2^e with m below 2^53; x x 10^places = m x 10^places x 2^e, and
  // m x 10^places stays below 2^113: exact in 128 bits for any e up to 13.
  int e = 0;
  const double f = std::frexp(std::fabs(x), &e);
  if (!std::isfinite(x) || e > 13 + 53) return parse(fmt::format("{:.{}f}", x, places));
  const auto m = static_cast<long long>(std::ldexp(f, 53));
  e -= 53;
  Wide n = static_cast<Wide>(m) * kPow10[places];
  if (e >= 0) {
    n <<= e;
  } else if (e < -120) {
    n = 0;  // below half a unit of the last place
  } else {
    const int k = -e;
    const Wide q = n >> k;
    const Wide rest = n - (q << k);
    const Wide half = static_cast<Wide>(1) << (k - 1);
    n = q + (rest > half || (rest == half && (q & 1) != 0) ? 1 : 0);
  }
  return from_wide(x < 0 ? -n : n, places);
}

void Decimal::normalize() {
  if (!big_) {
    if (small_ == 0) {
      scale_ = 0;
      return;
    }
    *this = from_word(small_, scale_);
    return;
  }
  while (scale_ > 0) {
    Int quotient, remainder;
    boost::multiprecision::divide_qr(mantissa(), Int(10), quotient, remainder);
    if (!remainder.is_zero()) break;
    mantissa() = std::move(quotient);
    --scale_;
  }
  // Fewer digits may now fit a machine word.
  long long small = 0;
  if (small_value(mantissa(), small)) {
    destroy_big();
    small_ = small;
  }
}

auto Decimal::scaled_to(int scale) const {
  return scale == scale_ ? as_int() : Int(as_int() * pow10(scale - scale_));
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
      return from_wide(text[0] == '-' ? -value : value, std::max(scale, 0));
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
  std::string digits = !big_ ? std::to_string(small_ < 0 ? -small_ : small_)
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
  std::string digits;
  if (!r.big_ && places >= r.scale_ && places - r.scale_ <= 18) {
    // |mantissa| * 10^(places - scale) < 2^63 * 10^18 fits 128 bits.
    UWide m = static_cast<UWide>(r.small_ < 0 ? -static_cast<Wide>(r.small_) : r.small_) *
              static_cast<UWide>(kPow10[places - r.scale_]);
    do {
      digits.push_back(static_cast<char>('0' + static_cast<int>(m % 10)));
      m /= 10;
    } while (m != 0);
    std::reverse(digits.begin(), digits.end());
  } else {
    digits = Int(boost::multiprecision::abs(r.scaled_to(places))).str();
  }
  if (places > 0 && static_cast<int>(digits.size()) <= places)
    digits.insert(0, static_cast<std::size_t>(places - static_cast<int>(digits.size()) + 1), '0');
  std::string out = r.is_negative() ? "-" : "";
  if (places <= 0) return out + digits;
  out += digits.substr(0, digits.size() - static_cast<std::size_t>(places));
  out.push_back('.');
  out += digits.substr(digits.size() - static_cast<std::size_t>(places));
  return out;
}

Decimal Decimal::rounded(int places) const {
  if (scale_ <= places) return *this;
  if (places >= 0 && scale_ - places <= 18 && !big_)
    return from_word(round_divide(small_, kPow10[scale_ - places]), places);
  return rounded_past_word(places);
}

// Kept apart from rounded() so that its word path does not pay for this
// frame.
[[gnu::noinline]] Decimal Decimal::rounded_past_word(int places) const {
  // Below 2^127 and at most 37 digits dropped.
  Wide w = 0;
  if (places >= 0 && scale_ - places <= 37 &&
      (big_ ? wide_value(mantissa(), w) : (w = small_, true)))
    return from_wide(round_divide(w, kWideTens[static_cast<std::size_t>(scale_ - places)]), places);
  return from_mantissa(round_half_even(as_int(), scale_ - places), places);
}

Decimal Decimal::times_rounded(const Decimal& a, const Decimal& b, int places) {
  // Two machine words multiply below 2^126; with at most 37 digits dropped,
  // twice a remainder fits too (as in rounded()). The quotient differs from
  // rounding the normalized product only by trailing zeros, which from_wide
  // drops.
  const int scale = a.scale_ + b.scale_;
  if (!a.big_ && !b.big_ && places >= 0 && scale - places <= 37 &&
      std::min(scale, places) <= kMaxScale) {
    long long word_product = 0;
    if (scale - places <= 18 && !__builtin_mul_overflow(a.small_, b.small_, &word_product) &&
        word_product != kLowest)
      return scale <= places
                 ? from_word(word_product, scale)
                 : from_word(round_divide(word_product, kPow10[scale - places]), places);
    const Wide product = static_cast<Wide>(a.small_) * b.small_;
    if (scale <= places) return from_wide(product, scale);
    return from_wide(round_divide(product, kWideTens[static_cast<std::size_t>(scale - places)]),
                     places);
  }
  return (a * b).rounded(places);
}

Decimal Decimal::truncated(int places) const {
  if (scale_ <= places) return *this;
  if (places >= 0 && scale_ - places <= 18 && !big_)
    return from_word(small_ / kPow10[scale_ - places], places);
  Wide w = 0;
  if (places >= 0 && scale_ - places <= 38 &&
      (big_ ? wide_value(mantissa(), w) : (w = small_, true)))
    return from_wide(w / kWideTens[static_cast<std::size_t>(scale_ - places)], places);
  return from_mantissa(Int(as_int() / pow10(scale_ - places)), places);
}

Decimal Decimal::floored(int places) const {
  if (scale_ <= places) return *this;
  if (places >= 0 && scale_ - places <= 18 && !big_) {
    // One division: the truncated quotient, one lower when a negative value
    // leaves a remainder.
    const long long unit = kPow10[scale_ - places];
    const long long q = small_ / unit;
    return from_word(small_ % unit < 0 ? q - 1 : q, places);
  }
  return floored_past_word(places);
}

[[gnu::noinline]] Decimal Decimal::floored_past_word(int places) const {
  const Decimal t = truncated(places);
  return (is_negative() && t != *this) ? t - from_wide(1, places) : t;
}

Decimal Decimal::divide(const Decimal& numerator, const Decimal& denominator, int places) {
  if (denominator.is_zero()) throw InputError("division by zero");
  // Machine words when both sides fit: a mantissa below 2^63 times 10^18 at
  // most stays below 2^123, so twice a remainder fits too. The same quotient
  // as the general path below.
  if (places >= 0 && denominator.scale_ + places <= 18 && numerator.scale_ <= 18 &&
      !numerator.big_ && !denominator.big_) {
    long long n64 = 0, d64 = 0;
    if (!__builtin_mul_overflow(numerator.small_, kPow10[denominator.scale_ + places], &n64) &&
        !__builtin_mul_overflow(denominator.small_, kPow10[numerator.scale_], &d64) &&
        n64 != kLowest && d64 != kLowest) {
      if (d64 < 0) n64 = -n64, d64 = -d64;
      return from_word(round_divide(n64, d64), places);
    }
    Wide n = static_cast<Wide>(numerator.small_) * kPow10[denominator.scale_ + places];
    Wide d = static_cast<Wide>(denominator.small_) * kPow10[numerator.scale_];
    if (d < 0) n = -n, d = -d;
    return from_wide(round_divide(n, d), places);
  }
  return divide_past_word(numerator, denominator, places);
}

// Kept apart from divide() so that its word paths do not pay for this frame.
[[gnu::noinline]] Decimal Decimal::divide_past_word(const Decimal& numerator,
                                                    const Decimal& denominator, int places) {
  // In 128 bits when both scaled sides fit and the divisor is below 2^126.
  if (places >= 0) {
    Wide n = 0, d = 0;
    const bool wide =
        (numerator.big_ ? wide_value(numerator.mantissa(), n) : (n = numerator.small_, true)) &&
        (denominator.big_ ? wide_value(denominator.mantissa(), d)
                          : (d = denominator.small_, true)) &&
        shift_wide(n, denominator.scale_ + places) && shift_wide(d, numerator.scale_);
    if (wide) {
      if (d < 0) n = -n, d = -d;
      if (d <= kWideMax / 2) return from_wide(round_divide(n, d), places);
    }
  }
  // (n / 10^a) / (d / 10^b) at `places` digits = n * 10^(b + places) / (d * 10^a).
  const Int n = numerator.as_int() * pow10(denominator.scale_ + places);
  const Int d = denominator.as_int() * pow10(numerator.scale_);
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
  constexpr long long kExact = 1LL << 53;
  const long long small = small_;
  if (scale_ <= 22 && !big_ && small < kExact && small > -kExact) {
    static constexpr double kTens[] = {1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,
                                       1e8,  1e9,  1e10, 1e11, 1e12, 1e13, 1e14, 1e15,
                                       1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};
    return static_cast<double>(small) / kTens[scale_];
  }
  // Via text keeps the conversion correctly rounded for every magnitude.
  return std::stod(str());
}

Decimal Decimal::operator-() const {
  if (!big_) return word(-small_, scale_);  // small_ is never kLowest
  return from_mantissa(Int(-mantissa()), scale_);
}

Decimal Decimal::plus(const Decimal& a, const Decimal& b) {
  const int scale = std::max(a.scale_, b.scale_);
  Wide x = 0, y = 0;
  Wide r = 0;
  if (Decimal::small_aligned(a, b, x, y) && !__builtin_add_overflow(x, y, &r))
    return Decimal::from_wide(r, scale);
  return Decimal::from_mantissa(Int(a.scaled_to(scale) + b.scaled_to(scale)), scale);
}

Decimal Decimal::minus(const Decimal& a, const Decimal& b) {
  const int scale = std::max(a.scale_, b.scale_);
  Wide x = 0, y = 0;
  Wide r = 0;
  if (Decimal::small_aligned(a, b, x, y) && !__builtin_sub_overflow(x, y, &r))
    return Decimal::from_wide(r, scale);
  return Decimal::from_mantissa(Int(a.scaled_to(scale) - b.scaled_to(scale)), scale);
}

Decimal Decimal::times(const Decimal& a, const Decimal& b) {
  if (!a.big_ && !b.big_)
    return Decimal::from_wide(static_cast<Wide>(a.small_) * b.small_, a.scale_ + b.scale_);
  Wide x = 0, y = 0, r = 0;
  if ((a.big_ ? wide_value(a.mantissa(), x) : (x = a.small_, true)) &&
      (b.big_ ? wide_value(b.mantissa(), y) : (y = b.small_, true)) &&
      !__builtin_mul_overflow(x, y, &r))
    return Decimal::from_wide(r, a.scale_ + b.scale_);
  return Decimal::from_mantissa(Int(a.as_int() * b.as_int()), a.scale_ + b.scale_);
}

bool Decimal::equal_big(const Decimal& a, const Decimal& b) {
  return a.mantissa() == b.mantissa();
}

std::strong_ordering Decimal::compare(const Decimal& a, const Decimal& b) {
  Wide sx = 0, sy = 0;
  if (Decimal::small_aligned(a, b, sx, sy)) return sx <=> sy;
  const int scale = std::max(a.scale_, b.scale_);
  const auto x = a.scaled_to(scale);
  const auto y = b.scaled_to(scale);
  if (x < y) return std::strong_ordering::less;
  if (x > y) return std::strong_ordering::greater;
  return std::strong_ordering::equal;
}

}  // namespace keel
