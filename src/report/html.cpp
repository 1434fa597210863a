#include "report/html.h"

#include <cmath>

#include "core/text.h"

namespace keel::report {

std::string html_escape(const std::string& raw) {
  const std::string text = valid_utf8(raw) ? raw : printable(raw);
  std::string out;
  out.reserve(text.size());
  for (const char c : text) {
    switch (c) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      case '\'':
        out += "&#39;";
        break;
      default:
        if (static_cast<unsigned char>(c) < 0x20 && c != '\n' && c != '\t')
          out += "&#xFFFD;";  // control characters have no place in a page
        else
          out += c;
    }
  }
  return out;
}

double nice_step(double span, int target) {
  if (!(span > 0)) return 1;
  const double raw = span / target;
  const double p = std::pow(10.0, std::floor(std::log10(raw)));
  for (const double m : {1.0, 2.0, 5.0, 10.0})
    if (raw <= m * p) return m * p;
  return 10 * p;
}

}  // namespace keel::report
