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
//  - Only decimal.cpp sees the mantissa's type: Boost.Multiprecision is the
//    costliest header of the build, and every file of keel includes this one.
#pragma once

#include <compare>
#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

namespace keel {

class Decimal {
 public:
  static constexpr int kMaxDigits = 60;
  static constexpr int kMaxScale = 30;

  Decimal();
  Decimal(long long whole);  // NOLINT: implicit from integers is natural for literals.
  Decimal(const Decimal& other);
  Decimal(Decimal&& other) noexcept;
  Decimal& operator=(const Decimal& other);
  Decimal& operator=(Decimal&& other) noexcept;
  ~Decimal();

  static Decimal parse(std::string_view text);
  // mantissa x 10^-scale, exactly; 0 <= scale <= kMaxScale (std::invalid_argument otherwise).
  static Decimal scaled(long long mantissa, int scale);
  static std::optional<Decimal> try_parse(std::string_view text) noexcept;

  // Exact quotient rounded half-to-even to `places` fractional digits.
  // Throws InputError on division by zero.
  static Decimal divide(const Decimal& numerator, const Decimal& denominator, int places);

  std::string str() const;              // canonical, lossless
  std::string fixed(int places) const;  // rounded half-to-even, exactly `places` digits
  Decimal rounded(int places) const;    // half-to-even
  Decimal truncated(int places) const;  // toward zero ("whole shares" style flooring of |x|)
  Decimal floored(int places) const;    // toward minus infinity

  int sign() const;
  bool is_zero() const;
  bool is_negative() const { return sign() < 0; }
  bool is_positive() const { return sign() > 0; }
  int scale() const { return scale_; }
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
  // The mantissa, a cpp_int, lives in raw storage; decimal.cpp defines these
  // (deduced types, used only there) and checks the size and alignment.
  static constexpr std::size_t kMantissaBytes = 32;
  auto& mantissa();
  const auto& mantissa() const;
  static Decimal from_mantissa(auto&& value, int scale);  // normalized
  // Parses without throwing; on failure, `why` says what is wrong.
  static std::optional<Decimal> parse_text(std::string_view text, std::string& why);
  void normalize();
  auto scaled_to(int scale) const;  // mantissa expressed at a larger scale

  alignas(16) unsigned char storage_[kMantissaBytes];
  int scale_ = 0;
};

}  // namespace keel
