// Prose that fits the terminal: wrap_to_width() breaks each line of `text`
// wider than `width` columns at spaces, the continuation indented as the line
// was; a word is never split unless it is wider than a whole line by itself,
// so a number is never cut in two. Colour sequences (ESC [ ... m) take no
// columns; widths are display widths (report::display_width). Width 0 leaves
// the text as it is.
#pragma once

#include <cstddef>
#include <string>

namespace keel::report {

std::string wrap_to_width(const std::string& text, std::size_t width);

}  // namespace keel::report
