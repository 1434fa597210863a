// What keel's HTML pages share: escaping of text for HTML and SVG, and the
// rounded step of a chart's axis.
//
// Contract
//  - html_escape(): &, <, >, " and ' as entities; control characters other
//    than newline and tab as U+FFFD; text that is not valid UTF-8 is first
//    made printable (core/text.h). The result is safe in element content
//    and in a quoted attribute. Never throws.
//  - nice_step(): the step 1, 2 or 5 x 10^k nearest above span / target, so
//    that span is covered in about `target` steps; 1 when span is not
//    positive.
#pragma once

#include <string>

namespace keel::report {

std::string html_escape(const std::string& raw);
double nice_step(double span, int target);

}  // namespace keel::report
