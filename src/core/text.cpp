#include "core/text.h"

#include <fmt/format.h>
#include <unicode/uchar.h>
#include <unicode/utf8.h>

#include "core/error.h"

namespace keel {

std::string printable_list(const std::vector<std::string>& items) {
  std::string out;
  for (const auto& item : items) out += (out.empty() ? "" : ", ") + printable(item);
  return out;
}

bool valid_utf8(std::string_view s) {
  std::size_t i = 0;
  while (i < s.size()) {
    const auto c = static_cast<unsigned char>(s[i]);
    std::size_t extra = 0;
    unsigned min = 0;
    unsigned cp = 0;
    if (c < 0x80) {
      ++i;
      continue;
    } else if ((c & 0xE0) == 0xC0) {
      extra = 1, cp = c & 0x1F, min = 0x80;
    } else if ((c & 0xF0) == 0xE0) {
      extra = 2, cp = c & 0x0F, min = 0x800;
    } else if ((c & 0xF8) == 0xF0) {
      extra = 3, cp = c & 0x07, min = 0x10000;
    } else {
      return false;
    }
    if (i + extra >= s.size()) return false;
    for (std::size_t k = 1; k <= extra; ++k) {
      const auto cc = static_cast<unsigned char>(s[i + k]);
      if ((cc & 0xC0) != 0x80) return false;
      cp = (cp << 6) | (cc & 0x3F);
    }
    if (cp < min || cp > 0x10FFFF || (cp >= 0xD800 && cp <= 0xDFFF)) return false;
    i += extra + 1;
  }
  return true;
}

namespace {

// U+0080 to U+009F (C1 controls, e.g. U+009B, a one-character escape
// sequence introducer on some terminals), written in UTF-8 at s[i].
bool c1_control_at(std::string_view s, std::size_t i) {
  return i + 1 < s.size() && static_cast<unsigned char>(s[i]) == 0xC2 &&
         static_cast<unsigned char>(s[i + 1]) >= 0x80 &&
         static_cast<unsigned char>(s[i + 1]) <= 0x9F;
}

}  // namespace

std::string printable(std::string_view s) {
  std::string out;
  out.reserve(s.size());
  const bool utf8 = valid_utf8(s);
  for (std::size_t i = 0; i < s.size(); ++i) {
    const auto c = static_cast<unsigned char>(s[i]);
    if (utf8 && c1_control_at(s, i)) {
      out += fmt::format("\\x{:02x}\\x{:02x}", c, static_cast<unsigned char>(s[i + 1]));
      ++i;
    } else if (c < 0x20 || c == 0x7F || (!utf8 && c >= 0x80)) {
      out += fmt::format("\\x{:02x}", c);
    } else {
      out.push_back(s[i]);
    }
  }
  return out;
}

void check_name(std::string_view field, std::string_view value, std::size_t max_bytes) {
  if (value.empty()) throw InputError(fmt::format("{} must not be empty", field));
  if (value.size() > max_bytes)
    throw InputError(fmt::format("{} is longer than {} bytes", field, max_bytes));
  if (!valid_utf8(value))
    throw InputError(fmt::format("{} '{}' is not valid UTF-8", field, printable(value)));
  for (std::size_t i = 0; i < value.size(); ++i) {
    const auto c = static_cast<unsigned char>(value[i]);
    if (c < 0x20 || c == 0x7F || c1_control_at(value, i))
      throw InputError(
          fmt::format("{} '{}' contains a control character", field, printable(value)));
  }
}

namespace {

// "U+202E RIGHT-TO-LEFT OVERRIDE" (the name from ICU; the number alone if it has none).
std::string describe(UChar32 c) {
  char name[128];
  UErrorCode status = U_ZERO_ERROR;
  const int32_t n = u_charName(c, U_UNICODE_CHAR_NAME, name, sizeof name, &status);
  if (U_FAILURE(status) || n <= 0) return fmt::format("U+{:04X}", static_cast<unsigned>(c));
  return fmt::format("U+{:04X} {}", static_cast<unsigned>(c), std::string_view(name, n));
}

bool invisible(UChar32 c) {
  const auto type = u_charType(c);
  return u_hasBinaryProperty(c, UCHAR_DEFAULT_IGNORABLE_CODE_POINT) || type == U_FORMAT_CHAR ||
         type == U_LINE_SEPARATOR || type == U_PARAGRAPH_SEPARATOR;
}

// Calls f(code point, offset, length) for each character of valid UTF-8 text
// until f returns false.
template <typename F>
void each_code_point(std::string_view s, F&& f) {
  const auto* bytes = reinterpret_cast<const uint8_t*>(s.data());
  const auto length = static_cast<int32_t>(s.size());
  int32_t i = 0;
  while (i < length) {
    const int32_t start = i;
    UChar32 c = 0;
    U8_NEXT(bytes, i, length, c);
    if (!f(c, static_cast<std::size_t>(start), static_cast<std::size_t>(i - start))) return;
  }
}

}  // namespace

std::string mark_invisible(std::string_view s) {
  if (!valid_utf8(s)) return printable(s);
  std::string out;
  each_code_point(s, [&](UChar32 c, std::size_t at, std::size_t n) {
    out += invisible(c) ? fmt::format("<U+{:04X}>", static_cast<unsigned>(c))
                        : printable(s.substr(at, n));
    return true;
  });
  return out;
}

std::optional<std::string> invisible_code_point(std::string_view text) {
  if (!valid_utf8(text)) return std::nullopt;
  std::optional<std::string> found;
  each_code_point(text, [&](UChar32 c, std::size_t, std::size_t) {
    if (invisible(c)) found = describe(c);
    return !found;
  });
  return found;
}

void check_identifier(std::string_view field, std::string_view value, std::size_t max_bytes) {
  check_name(field, value, max_bytes);
  if (const auto which = invisible_code_point(value))
    throw InputError(fmt::format(
        "{} '{}' contains {}, an invisible character; names may not contain invisible or "
        "direction-changing characters",
        field, mark_invisible(value), *which));
  UChar32 first = -1, last = -1;
  each_code_point(value, [&](UChar32 c, std::size_t, std::size_t) {
    if (first < 0) first = c;
    last = c;
    return true;
  });
  for (const auto& [c, where] : {std::pair{first, "starts"}, std::pair{last, "ends"}})
    if (u_isUWhiteSpace(c))
      throw InputError(
          fmt::format("{} '{}' {} with white space ({}); names may not start or end "
                      "with it",
                      field, printable(value), where, describe(c)));
}

std::string to_valid_utf8(std::string_view text) {
  if (valid_utf8(text)) return std::string(text);
  std::string out;
  out.reserve(text.size() + 8);
  each_code_point(text, [&](UChar32 c, std::size_t at, std::size_t n) {
    if (c < 0)
      out += "\xEF\xBF\xBD";
    else
      out.append(text.substr(at, n));
    return true;
  });
  return out;
}

std::string ascii_lower(std::string_view text) {
  std::string out(text);
  for (char& c : out)
    if (c >= 'A' && c <= 'Z') c = static_cast<char>(c - 'A' + 'a');
  return out;
}

}  // namespace keel
