// Decimal: an exact base-10 number for money, prices and quantities.
//
// Contract
//  - Value is mantissa * 10^-scale with an arbitrary-precision integer mantissa
//    (Boost.Multiprecision cpp_int); +, -, * and comparisons are exact.
//  - Values are always kept normalized (no trailing fractional zeros), so the
//    text form is canonical: "0.3", "-12.5", "0.00012345", "100".
//  - Rounding happens only where a caller asks for it (rounded(), divide()),
//    and always half-to-even ("banker's rounding").
//  - parse() accepts [+|-]digits[.digits][(e|E)[+|-]digits] and throws
//    keel::InputError with a message naming the text on anything else, or when
//    the number has more than kMaxDigits significant digits or a scale beyond
//    kMaxScale.
//  - to_double() exists only for statistics; never feed its result back into a
//    ledger amount.
//  - A mantissa that fits a machine word takes no arbitrary-precision work;
//    +, -, * and comparisons of two such values whose result fits one too are
//    done inline here. Mantissas below 2^127 (and results that fit there)
//    are worked on in 128 bits. Both give what the general code gives.
//  - Only decimal.cpp sees the mantissa's type: Boost.Multiprecision is the
//    costliest header of the build, and every file of keel includes this one.
#pragma once

#include <compare>
#include <cstddef>
#include <cstdint>
#include <limits>
#include <optional>
#include <string>
#include <string_view>

namespace keel {

class Decimal {
 public:
  static constexpr int kMaxDigits = 60;
  static constexpr int kMaxScale = 30;

  // User-provided, so that `const Decimal zero;` is well-formed for every compiler.
  Decimal() noexcept {}       // NOLINT(modernize-use-equals-default)
  Decimal(long long whole) {  // NOLINT: implicit from integers is natural for literals.
    if (whole == std::numeric_limits<long long>::min())
      set_lowest();
    else
      small_ = whole;
  }
  Decimal(const Decimal& other) : scale_(other.scale_) {
    if (other.big_)
      copy_big(other);
    else
      small_ = other.small_;
  }
  Decimal(Decimal&& other) noexcept : scale_(other.scale_) {
    if (other.big_)
      move_big(other);
    else
      small_ = other.small_;
  }
  Decimal& operator=(const Decimal& other) {
    if (big_ || other.big_) return assign_big(other);
    small_ = other.small_;
    scale_ = other.scale_;
    return *this;
  }
  Decimal& operator=(Decimal&& other) noexcept {
    if (big_ || other.big_) return move_assign_big(other);
    small_ = other.small_;
    scale_ = other.scale_;
    return *this;
  }
  ~Decimal() {
    if (big_) destroy_big();
  }

  static Decimal parse(std::string_view text);
  // mantissa x 10^-scale, exactly; 0 <= scale <= kMaxScale (std::invalid_argument otherwise).
  static Decimal scaled(long long mantissa, int scale);
  static std::optional<Decimal> try_parse(std::string_view text) noexcept;
  // The decimal that fmt's "{:.Nf}" prints for x with N = places (0..18):
  // the binary value exactly, rounded half-to-even to `places` digits, with
  // no text in between. Throws InputError, as parse() of that text does, for
  // a value that is not finite.
  static Decimal of_double(double x, int places);

  // Exact quotient rounded half-to-even to `places` fractional digits.
  // Throws InputError on division by zero.
  static Decimal divide(const Decimal& numerator, const Decimal& denominator, int places);
  // (a * b).rounded(places), the same value; where both mantissas fit a
  // machine word the product is rounded in 128 bits, never built on the heap.
  static Decimal times_rounded(const Decimal& a, const Decimal& b, int places);

  std::string str() const;              // canonical, lossless
  std::string fixed(int places) const;  // rounded half-to-even, exactly `places` digits
  Decimal rounded(int places) const;    // half-to-even
  Decimal truncated(int places) const;  // toward zero ("whole shares" style flooring of |x|)
  Decimal floored(int places) const;    // toward minus infinity

  int sign() const { return big_ ? big_sign() : (small_ > 0) - (small_ < 0); }
  bool is_zero() const { return !big_ && small_ == 0; }
  bool is_negative() const { return sign() < 0; }
  bool is_positive() const { return sign() > 0; }
  int scale() const { return scale_; }
  // value x 10^scale() when it is held in a machine word; unset when it needs
  // the arbitrary-precision form. For integer fast paths that must not format.
  std::optional<long long> machine_mantissa() const {
    if (big_) return std::nullopt;
    return small_;
  }
  double to_double() const;

  Decimal operator-() const;
  Decimal abs() const { return is_negative() ? -*this : *this; }
  friend Decimal operator+(const Decimal& a, const Decimal& b) {
    long long x = 0, y = 0, r = 0;
    if (word_aligned(a, b, x, y) && !__builtin_add_overflow(x, y, &r) && r != kLowest)
      return aligned_word(r, a.scale_, b.scale_);
    return plus(a, b);
  }
  friend Decimal operator-(const Decimal& a, const Decimal& b) {
    long long x = 0, y = 0, r = 0;
    if (word_aligned(a, b, x, y) && !__builtin_sub_overflow(x, y, &r) && r != kLowest)
      return aligned_word(r, a.scale_, b.scale_);
    return minus(a, b);
  }
  friend Decimal operator*(const Decimal& a, const Decimal& b) {
    long long r = 0;
    if (!a.big_ && !b.big_ && !__builtin_mul_overflow(a.small_, b.small_, &r) && r != kLowest)
      return from_word(r, a.scale_ + b.scale_);
    return times(a, b);
  }
  Decimal& operator+=(const Decimal& other) { return *this = *this + other; }
  Decimal& operator-=(const Decimal& other) { return *this = *this - other; }
  Decimal& operator*=(const Decimal& other) { return *this = *this * other; }

  friend bool operator==(const Decimal& a, const Decimal& b) {
    // Normalized values compare equal only when both parts match.
    if (a.scale_ != b.scale_ || a.big_ != b.big_) return false;
    return a.big_ ? equal_big(a, b) : a.small_ == b.small_;
  }
  friend std::strong_ordering operator<=>(const Decimal& a, const Decimal& b) {
    if (a.big_ || b.big_) return compare(a, b);
    if (a.scale_ == b.scale_) return a.small_ <=> b.small_;
    return compare_words(a, b);
  }

 private:
  static constexpr long long kLowest = std::numeric_limits<long long>::min();
  // 10^0 .. 10^18, every power of ten that fits a long long.
  static constexpr long long kTens[] = {1LL,
                                        10LL,
                                        100LL,
                                        1000LL,
                                        10000LL,
                                        100000LL,
                                        1000000LL,
                                        10000000LL,
                                        100000000LL,
                                        1000000000LL,
                                        10000000000LL,
                                        100000000000LL,
                                        1000000000000LL,
                                        10000000000000LL,
                                        100000000000000LL,
                                        1000000000000000LL,
                                        10000000000000000LL,
                                        100000000000000000LL,
                                        1000000000000000000LL};
  // a and b as machine-word mantissas at the larger of their scales, when
  // both are small and the shifted one still fits a word (else false).
  static bool word_aligned(const Decimal& a, const Decimal& b, long long& x, long long& y) {
    if (a.big_ || b.big_) return false;
    x = a.small_;
    y = b.small_;
    if (a.scale_ == b.scale_) return true;
    if (a.scale_ < b.scale_) {
      const int shift = b.scale_ - a.scale_;
      return shift <= 18 && !__builtin_mul_overflow(x, kTens[shift], &x) && x != kLowest;
    }
    const int shift = a.scale_ - b.scale_;
    return shift <= 18 && !__builtin_mul_overflow(y, kTens[shift], &y) && y != kLowest;
  }
  // mantissa x 10^-scale as it stands: the caller knows it is normalized.
  static Decimal word(long long mantissa, int scale) {
    Decimal out;
    out.small_ = mantissa;
    out.scale_ = scale;
    return out;
  }
  // mantissa x 10^-scale, normalized, for a mantissa other than kLowest. An
  // odd mantissa has no factor ten, so only an even one at a positive scale
  // is tested, and only a multiple of ten is stripped (out of line).
  static Decimal from_word(long long mantissa, int scale) {
    if ((mantissa & 1) != 0 || scale == 0 || !multiple_of_ten(mantissa))
      return word(mantissa, scale);
    return strip_word(mantissa, scale);
  }
  // |m| is a multiple of 10: rotr(|m| x 5^-1 mod 2^64, 1) <= (2^64 - 1) / 10
  // (Granlund and Montgomery 1994, section 9), a multiplication, not a division.
  static bool multiple_of_ten(long long m) {
    const unsigned long long u =
        m < 0 ? 0 - static_cast<unsigned long long>(m) : static_cast<unsigned long long>(m);
    const unsigned long long p = u * 0xCCCCCCCCCCCCCCCDULL;  // the inverse of 5
    return ((p >> 1) | (p << 63)) <= 0x1999999999999999ULL;  // (2^64 - 1) / 10
  }
  static Decimal strip_word(long long mantissa, int scale);  // from_word: a multiple of ten
  // The sum or difference r of two normalized word mantissas aligned by
  // word_aligned(). When their scales differ, the one at the larger scale
  // (positive, so it ends in a digit other than 0) meets one shifted by at
  // least a place (ending in 0): r ends in that digit too and is normalized
  // as it stands. At equal scales r may end in zeros.
  static Decimal aligned_word(long long r, int scale_a, int scale_b) {
    if (scale_a != scale_b) return word(r, scale_a > scale_b ? scale_a : scale_b);
    return from_word(r, scale_a);
  }
  // Two word mantissas at different scales. When word_aligned() cannot shift
  // the one at the smaller scale (more than 18 places, or past a word), that
  // one, unless zero, is beyond 2^63 - 1 in magnitude once shifted, so larger
  // than the other's: its sign decides.
  static std::strong_ordering compare_words(const Decimal& a, const Decimal& b) {
    long long x = 0, y = 0;
    if (word_aligned(a, b, x, y)) return x <=> y;
    const Decimal& shifted = a.scale_ < b.scale_ ? a : b;
    if (shifted.small_ == 0) return a.small_ <=> b.small_;  // 0 against the other's sign
    return &shifted == &a ? a.small_ <=> 0 : 0 <=> b.small_;
  }
  // The general forms of the operators above.
  static Decimal plus(const Decimal& a, const Decimal& b);
  static Decimal minus(const Decimal& a, const Decimal& b);
  static Decimal times(const Decimal& a, const Decimal& b);
  static std::strong_ordering compare(const Decimal& a, const Decimal& b);
  static bool equal_big(const Decimal& a, const Decimal& b);  // both big, same scale
  // A mantissa that fits a machine word (all but the rarest) is kept in
  // small_; only a larger one makes a cpp_int, on the heap, which decimal.cpp
  // alone allocates and frees (deduced types, used only there). big_ says
  // which: a value is big exactly when its mantissa lies outside
  // [-(2^63 - 1), 2^63 - 1], so each value has one representation. Keeping
  // the rare large mantissa out of line makes a Decimal 16 bytes instead of
  // 48: every ledger row, lot and position holds several.
  auto& mantissa();                                       // big_ only
  const auto& mantissa() const;                           // big_ only
  auto as_int() const;                                    // the mantissa as a cpp_int, either way
  static Decimal from_mantissa(auto&& value, int scale);  // normalized
  __extension__ typedef __int128 Wide;              // GCC and Clang; -Wpedantic wants the marker
  static Decimal from_wide(Wide value, int scale);  // normalized
  // The parts of from_wide(), rounded(), floored() and divide() past a
  // machine word (128 bits, then the general path), out of line.
  static Decimal from_past_word(Wide value, int scale);
  Decimal rounded_past_word(int places) const;
  Decimal floored_past_word(int places) const;
  static Decimal divide_past_word(const Decimal& numerator, const Decimal& denominator, int places);
  static bool small_aligned(const Decimal& a, const Decimal& b, Wide& x, Wide& y);
  void set_int(auto&& value);                         // any mantissa
  void set_lowest();                                  // the mantissa -2^63
  void copy_big(const Decimal& other);                // into a fresh object
  void move_big(Decimal& other) noexcept;             // into a fresh object
  Decimal& assign_big(const Decimal& other);          // either side big
  Decimal& move_assign_big(Decimal& other) noexcept;  // either side big
  void destroy_big() noexcept;
  int big_sign() const;
  // Parses without throwing; on failure, `why` says what is wrong.
  static std::optional<Decimal> parse_text(std::string_view text, std::string& why);
  void normalize();
  auto scaled_to(int scale) const;  // mantissa expressed at a larger scale

  union {
    long long small_ = 0;
    void* big_mantissa_;  // a cpp_int, owned, when big_
  };
  int scale_ = 0;
  bool big_ = false;
};

}  // namespace keel
