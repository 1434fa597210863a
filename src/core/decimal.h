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
//  - A mantissa that fits a machine word takes no arbitrary-precision work.
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
  friend Decimal operator+(const Decimal& a, const Decimal& b);
  friend Decimal operator-(const Decimal& a, const Decimal& b);
  friend Decimal operator*(const Decimal& a, const Decimal& b);
  Decimal& operator+=(const Decimal& other) { return *this = *this + other; }
  Decimal& operator-=(const Decimal& other) { return *this = *this - other; }
  Decimal& operator*=(const Decimal& other) { return *this = *this * other; }

  friend bool operator==(const Decimal& a, const Decimal& b);
  friend std::strong_ordering operator<=>(const Decimal& a, const Decimal& b);

 private:
  // A mantissa that fits a machine word (all but the rarest) is kept in
  // small_; only a larger one makes a cpp_int, in raw storage that
  // decimal.cpp alone constructs (deduced types, used only there; it checks
  // the size and alignment). big_ says which: a value is big exactly when
  // its mantissa lies outside [-(2^63 - 1), 2^63 - 1], so each value has one
  // representation.
  static constexpr std::size_t kMantissaBytes = 32;
  auto& mantissa();                                       // big_ only
  const auto& mantissa() const;                           // big_ only
  auto as_int() const;                                    // the mantissa as a cpp_int, either way
  static Decimal from_mantissa(auto&& value, int scale);  // normalized
  __extension__ typedef __int128 Wide;              // GCC and Clang; -Wpedantic wants the marker
  static Decimal from_wide(Wide value, int scale);  // normalized
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
    alignas(16) unsigned char storage_[kMantissaBytes];
  };
  int scale_ = 0;
  bool big_ = false;
};

}  // namespace keel
