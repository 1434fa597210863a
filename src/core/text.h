// Text helpers for safe display and validation of user-supplied names.
//  - printable(): the text with control characters (C0, DEL and the C1 range
//    U+0080-U+009F) and invalid UTF-8 shown as \xNN escapes, so hostile input
//    cannot drive the terminal. Never throws.
//  - printable_list(): each item printable(), joined by ", ".
//  - check_name(): refuses empty text, text over max_bytes bytes, invalid
//    UTF-8 and control characters (the same set), with InputError naming
//    `field`. For free text (notes, reasons).
//  - check_identifier(): check_name(), and also refuses what would let two
//    names print alike: invisible characters (Unicode's Default_Ignorable_Code_Point
//    property, general category Cf such as bidirectional overrides and
//    zero-width spaces, and the line and paragraph separators U+2028/U+2029),
//    and white space at either end. The message names the code point
//    ("U+202E RIGHT-TO-LEFT OVERRIDE"). For names, symbols and references.
//  - invisible_code_point(): the first such invisible character, described
//    as above; unset if there is none (or the text is not valid UTF-8).
//  - mark_invisible(): printable(), with each such invisible character
//    written as <U+XXXX>, for messages about them.
//  - to_valid_utf8(): the text with every ill-formed UTF-8 sequence replaced
//    by U+FFFD REPLACEMENT CHARACTER (one per maximal subpart, as the Unicode
//    Standard's chapter 3 recommends); valid text comes back unchanged.
// Character properties and names come from ICU (libicu).
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace keel {

std::string printable(std::string_view text);
std::string printable_list(const std::vector<std::string>& items);
bool valid_utf8(std::string_view text);
void check_name(std::string_view field, std::string_view value, std::size_t max_bytes);
void check_identifier(std::string_view field, std::string_view value, std::size_t max_bytes);
std::optional<std::string> invisible_code_point(std::string_view text);
std::string mark_invisible(std::string_view text);
std::string to_valid_utf8(std::string_view text);
// Lower-cases ASCII letters only.
std::string ascii_lower(std::string_view text);

}  // namespace keel
