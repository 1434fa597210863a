#include "report/paper.h"

#include <fmt/format.h>
#include <langinfo.h>
#include <locale.h>

#include <cstdint>

#include "core/error.h"
#include "core/text.h"

namespace keel::report {

Paper parse_paper(std::string_view text) {
  const std::string name = ascii_lower(text);
  if (name == "a4") return Paper::a4;
  if (name == "letter") return Paper::letter;
  throw InputError(fmt::format("'{}' is not a paper size; expected a4 or letter", printable(text)));
}

Paper paper_of_size(int height_mm, int width_mm) {
  return height_mm == 279 && width_mm == 216 ? Paper::letter : Paper::a4;
}

Paper default_paper() {
  // newlocale() reads LC_ALL, LC_PAPER and LANG as setlocale() would, without
  // touching the program's locale; it fails for a locale that is not installed.
  const locale_t locale = ::newlocale(LC_PAPER_MASK, "", static_cast<locale_t>(nullptr));
  if (!locale) return Paper::a4;
  // glibc answers these two items with the number itself in place of a pointer.
  const auto height =
      static_cast<int>(reinterpret_cast<std::intptr_t>(::nl_langinfo_l(_NL_PAPER_HEIGHT, locale)));
  const auto width =
      static_cast<int>(reinterpret_cast<std::intptr_t>(::nl_langinfo_l(_NL_PAPER_WIDTH, locale)));
  ::freelocale(locale);
  return paper_of_size(height, width);
}

std::string_view css_page_size(Paper paper) {
  return paper == Paper::letter ? "letter" : "A4";
}

}  // namespace keel::report
