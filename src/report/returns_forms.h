// The forms of a returns report (perf/returns_report.h): terminal text (the
// summary or the month-by-month table) and JSON.
//
// Contract
//  - `method` is "daily" (true time-weighted) or "dietz" (Modified Dietz,
//    monthly linked): it chooses which time-weighted figures are shown.
//  - Text ends with the caution that past results do not predict future
//    returns; JSON gives money as exact decimal strings, returns as numbers,
//    absent figures as null, and the months only when asked.
//  - The report's `local` figures (--local), when present, follow the
//    summary as a table of each account's returns in its own currency, and
//    are the JSON's `local` array (absent without them).
#pragma once

#include <string>

#include "perf/returns_report.h"
#include "report/table.h"

namespace keel::report {

std::string returns_text(const perf::ReturnsReport& rep, const std::string& method, bool monthly,
                         const Style& style);
std::string returns_json(const perf::ReturnsReport& rep, const std::string& method, bool monthly);

}  // namespace keel::report
