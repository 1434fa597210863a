// The paper a statement is laid out for (HTML print rules, the PDF, the XLSX
// page setup).
//  - parse_paper() accepts "a4" and "letter" (any ASCII case); anything else
//    is an InputError naming the choices (the caller adds the option).
//  - default_paper() is the locale's paper (glibc's LC_PAPER, found through
//    LC_ALL, LC_PAPER and LANG): letter where it is 216 x 279 mm, A4 for any
//    other size and where no usable locale is set. Reads the environment only;
//    the program's own locale is left as it is.
#pragma once

#include <string_view>

namespace keel::report {

enum class Paper { a4, letter };

Paper parse_paper(std::string_view text);
Paper default_paper();
Paper paper_of_size(int height_mm, int width_mm);  // letter for 279 x 216, else A4
std::string_view css_page_size(Paper paper);       // "A4" or "letter"

}  // namespace keel::report
