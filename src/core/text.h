// Text helpers for safe display and validation of user-supplied names.
//  - printable(): the text with control characters (C0, DEL and the C1 range
//    U+0080-U+009F) and invalid UTF-8 shown as \xNN escapes, so hostile input
//    cannot drive the terminal. Never throws.
//  - printable_list(): each item printable(), joined by ", ".
//  - check_name(): refuses empty text, text over max_chars bytes, invalid
//    UTF-8 and control characters (the same set), with InputError naming
//    `field`.
#pragma once

#include <string>
#include <string_view>
#include <vector>

namespace keel {

std::string printable(std::string_view text);
std::string printable_list(const std::vector<std::string>& items);
bool valid_utf8(std::string_view text);
void check_name(std::string_view field, std::string_view value, std::size_t max_bytes);
// Lower-cases ASCII letters only.
std::string ascii_lower(std::string_view text);

}  // namespace keel
