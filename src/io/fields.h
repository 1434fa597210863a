// Field checks for the intake hot path: validate text and produce keel's
// canonical text without allocating (outputs reuse the caller's buffer).
//
//  - canonical_decimal(): the text of a number as Decimal::str() would give
//    it ("007.50" -> "7.5"); plain [+|-]digits[.digits] is handled by hand,
//    anything else (exponents, very long numbers) goes through Decimal.
//  - iso_date(): true for a real calendar day written YYYY-MM-DD.
//  - DateFormat: a day written another way ("%d/%m/%Y"), converted to ISO.
//  - normalize_number(): applies a decimal mark and thousands separator,
//    giving text with '.' as the mark and no grouping.
// On failure each writes a reason (for "column 'x': reason") into `why`.
#pragma once

#include <string>
#include <string_view>

namespace keel::io {

bool canonical_decimal(std::string_view text, std::string& out, std::string& why);
bool iso_date(std::string_view text, std::string& why);

class DateFormat {
 public:
  DateFormat() = default;  // ISO 8601 YYYY-MM-DD
  // Directives: %Y (4-digit year), %m (month 1-12, 1 or 2 digits), %d (day,
  // 1 or 2 digits), %%; anything else must match literally. Throws
  // InputError for an unknown directive or a pattern missing one of %Y %m %d.
  explicit DateFormat(std::string pattern);
  bool iso() const { return pattern_.empty(); }
  const std::string& pattern() const { return pattern_; }
  // Writes "YYYY-MM-DD" into `out`.
  bool to_iso(std::string_view text, std::string& out, std::string& why) const;

 private:
  std::string pattern_;
};

bool normalize_number(std::string_view text, char decimal_mark, char thousands, std::string& out,
                      std::string& why);

}  // namespace keel::io
