#include "core/json.h"

#include <charconv>
#include <cmath>
#include <cstring>
#include <stdexcept>
#include <utility>

#include "core/text.h"

namespace keel {
namespace {

// The UTF-8 sequence at the start of `s`: whether it is well formed and how
// many bytes it takes. An ill-formed one takes its maximal subpart, at least
// one byte: what one U+FFFD stands for (Unicode Standard, chapter 3, "U+FFFD
// Substitution of Maximal Subparts").
std::pair<bool, std::size_t> next_sequence(std::string_view s) {
  const auto c = static_cast<unsigned char>(s[0]);
  std::size_t need = 0;
  unsigned char lo = 0x80, hi = 0xBF;  // the range of the second byte
  if (c < 0x80) return {true, 1};
  if (c >= 0xC2 && c <= 0xDF) {
    need = 1;
  } else if (c >= 0xE0 && c <= 0xEF) {
    need = 2;
    if (c == 0xE0) lo = 0xA0;
    if (c == 0xED) hi = 0x9F;
  } else if (c >= 0xF0 && c <= 0xF4) {
    need = 3;
    if (c == 0xF0) lo = 0x90;
    if (c == 0xF4) hi = 0x8F;
  } else {
    return {false, 1};
  }
  for (std::size_t n = 1; n <= need; ++n) {
    if (n >= s.size()) return {false, n};
    const auto x = static_cast<unsigned char>(s[n]);
    if (n == 1 ? (x < lo || x > hi) : (x < 0x80 || x > 0xBF)) return {false, n};
  }
  return {true, need + 1};
}

// Whether `text` goes out between quotes as it is: printable ASCII without
// a quote or a backslash (keys, symbols, dates, decimals).
bool plain(std::string_view text) {
  for (const char ch : text) {
    const auto c = static_cast<unsigned char>(ch);
    if (c < 0x20 || c >= 0x80 || c == '"' || c == '\\') return false;
  }
  return true;
}

}  // namespace

void append_json_string(std::string& out, std::string_view text) {
  if (text.size() <= 62 && plain(text)) {  // one append of a short plain string
    char buf[64];
    buf[0] = '"';
    std::memcpy(buf + 1, text.data(), text.size());
    buf[text.size() + 1] = '"';
    out.append(buf, text.size() + 2);
    return;
  }
  out += '"';
  // Runs of bytes written as they are go out in one append; text is checked
  // for UTF-8 only when it holds a byte above 0x7F.
  int valid = -1;  // unknown until the first such byte
  std::size_t run = 0;
  for (std::size_t i = 0; i < text.size();) {
    const auto c = static_cast<unsigned char>(text[i]);
    if (c >= 0x20 && c != '"' && c != '\\') {
      if (c < 0x80) {
        ++i;
        continue;
      }
      if (valid < 0) valid = valid_utf8(text) ? 1 : 0;
      if (valid) {
        ++i;
        continue;
      }
    }
    out.append(text.substr(run, i - run));
    if (c >= 0x80) {
      const auto [ok, n] = next_sequence(text.substr(i));
      if (ok)
        out.append(text.substr(i, n));
      else
        out += "\xEF\xBF\xBD";
      i += n;
      run = i;
      continue;
    }
    switch (c) {
      case '"':
        out += "\\\"";
        break;
      case '\\':
        out += "\\\\";
        break;
      case '\b':
        out += "\\b";
        break;
      case '\f':
        out += "\\f";
        break;
      case '\n':
        out += "\\n";
        break;
      case '\r':
        out += "\\r";
        break;
      case '\t':
        out += "\\t";
        break;
      default: {
        static const char kHex[] = "0123456789abcdef";
        out += "\\u00";
        out += kHex[c >> 4];
        out += kHex[c & 15];
      }
    }
    run = ++i;
  }
  out.append(text.substr(run));
  out += '"';
}

void append_json_number(std::string& out, double x) {
  if (!std::isfinite(x)) {
    out += "null";
    return;
  }
  if (x == 0) {
    out += std::signbit(x) ? "-0.0" : "0.0";
    return;
  }
  // The shortest digits that read back as x, laid out as nlohmann::json
  // lays them out: fixed from 1e-4 to below 1e15, else d.ddde+XX.
  char buf[64];
  const auto res =
      std::to_chars(buf, buf + sizeof buf, std::fabs(x), std::chars_format::scientific);
  const std::string_view sci(buf, static_cast<std::size_t>(res.ptr - buf));
  const std::size_t e_at = sci.find('e');
  char digit_buf[24];  // at most 17 significant digits
  std::size_t digit_count = 0;
  for (const char c : sci.substr(0, e_at))
    if (c != '.') digit_buf[digit_count++] = c;
  const std::string_view digits(digit_buf, digit_count);
  int exp10 = 0;
  std::from_chars(sci.data() + e_at + 1 + (sci[e_at + 1] == '+'), sci.data() + sci.size(), exp10);
  const int k = static_cast<int>(digits.size());
  const int n = exp10 + 1;  // x = 0.digits x 10^n
  if (x < 0) out += '-';
  if (k <= n && n <= 15) {
    out += digits;
    out.append(static_cast<std::size_t>(n - k), '0');
    out += ".0";
  } else if (0 < n && n <= 15) {
    out.append(digits.substr(0, static_cast<std::size_t>(n)));
    out += '.';
    out.append(digits.substr(static_cast<std::size_t>(n)));
  } else if (-4 < n && n <= 0) {
    out += "0.";
    out.append(static_cast<std::size_t>(-n), '0');
    out += digits;
  } else {
    out += digits[0];
    if (k > 1) {
      out += '.';
      out.append(digits.substr(1));
    }
    const int e = n - 1;
    out += e < 0 ? "e-" : "e+";
    const int a = std::abs(e);
    if (a < 10) out += '0';
    out += std::to_string(a);
  }
}

void JsonWriter::newline(std::size_t depth) {
  if (indent_ < 0) return;
  out_ += '\n';
  out_.append(depth * static_cast<std::size_t>(indent_), ' ');
}

void JsonWriter::before_value() {
  if (stack_.empty()) return;
  Level& level = stack_.back();
  if (level.object) {
    if (!after_key_) throw std::logic_error("JsonWriter: a value where a key is due");
    after_key_ = false;
    return;
  }
  if (!level.empty) out_ += ',';
  level.empty = false;
  newline(stack_.size());
}

JsonWriter& JsonWriter::key(std::string_view name) {
  if (stack_.empty() || !stack_.back().object || after_key_)
    throw std::logic_error("JsonWriter: a key outside an object");
  Level& level = stack_.back();
  const bool first = level.empty;
  level.empty = false;
  after_key_ = true;
  // Most keys are short plain words: the comma, the line, its indent and
  // the key go out in one append.
  const std::size_t pad = indent_ < 0 ? 0 : stack_.size() * static_cast<std::size_t>(indent_);
  char buf[160];
  if (pad + name.size() + 6 <= sizeof buf && plain(name)) {
    std::size_t n = 0;
    if (!first) buf[n++] = ',';
    if (indent_ >= 0) {
      buf[n++] = '\n';
      std::memset(buf + n, ' ', pad);
      n += pad;
    }
    buf[n++] = '"';
    std::memcpy(buf + n, name.data(), name.size());
    n += name.size();
    buf[n++] = '"';
    buf[n++] = ':';
    if (indent_ >= 0) buf[n++] = ' ';
    out_.append(buf, n);
    return *this;
  }
  if (!first) out_ += ',';
  newline(stack_.size());
  append_json_string(out_, name);
  out_ += indent_ < 0 ? ":" : ": ";
  return *this;
}

JsonWriter& JsonWriter::begin_object() {
  before_value();
  out_ += '{';
  stack_.push_back({true});
  return *this;
}

JsonWriter& JsonWriter::begin_array() {
  before_value();
  out_ += '[';
  stack_.push_back({false});
  return *this;
}

JsonWriter& JsonWriter::end_object() {
  if (stack_.empty() || !stack_.back().object || after_key_)
    throw std::logic_error("JsonWriter: no object to close");
  const bool empty = stack_.back().empty;
  stack_.pop_back();
  if (!empty) newline(stack_.size());
  out_ += '}';
  return *this;
}

JsonWriter& JsonWriter::end_array() {
  if (stack_.empty() || stack_.back().object)
    throw std::logic_error("JsonWriter: no array to close");
  const bool empty = stack_.back().empty;
  stack_.pop_back();
  if (!empty) newline(stack_.size());
  out_ += ']';
  return *this;
}

JsonWriter& JsonWriter::value(std::string_view text) {
  before_value();
  append_json_string(out_, text);
  return *this;
}

JsonWriter& JsonWriter::value(bool b) {
  before_value();
  out_ += b ? "true" : "false";
  return *this;
}

JsonWriter& JsonWriter::value(long long v) {
  before_value();
  char buf[24];
  const auto res = std::to_chars(buf, buf + sizeof buf, v);
  out_.append(buf, res.ptr);
  return *this;
}

JsonWriter& JsonWriter::value(unsigned long long v) {
  before_value();
  char buf[24];
  const auto res = std::to_chars(buf, buf + sizeof buf, v);
  out_.append(buf, res.ptr);
  return *this;
}

JsonWriter& JsonWriter::value(double v) {
  before_value();
  append_json_number(out_, v);
  return *this;
}

JsonWriter& JsonWriter::null() {
  before_value();
  out_ += "null";
  return *this;
}

JsonWriter& JsonWriter::value(const std::vector<std::string>& items) {
  begin_array();
  for (const auto& s : items) value(s);
  return end_array();
}

}  // namespace keel
