// The statement for a terminal: a heading, then each section as an aligned
// table with its notes wrapped to 100 columns.
#include <fmt/format.h>

#include <algorithm>

#include "core/text.h"
#include "report/statement_forms.h"

namespace keel::report {
namespace {

constexpr std::size_t kWidth = 100;

std::string wrap(const std::string& text, std::size_t width, const std::string& indent = "") {
  std::string out, line;
  std::size_t start = 0;
  while (start < text.size()) {
    std::size_t end = text.find(' ', start);
    if (end == std::string::npos) end = text.size();
    const std::string word = text.substr(start, end - start);
    if (!line.empty() && line != indent && display_width(line) + 1 + display_width(word) > width) {
      out += line + "\n";
      line = indent;
    }
    if (!line.empty() && line != indent) line += ' ';
    line += word;
    start = end + 1;
  }
  if (!line.empty()) out += line + "\n";
  return out;
}

std::string heading(const std::string& title, bool colour) {
  const std::string rule(display_width(title), '=');
  if (colour) return "\x1b[1m" + printable(title) + "\x1b[0m\n" + rule + "\n";
  return printable(title) + "\n" + rule + "\n";
}

}  // namespace

std::string statement_text(const Statement& s, bool colour) {
  std::string out = heading(fmt::format("keel statement {}: {}", s.year, s.scope), colour);
  out += wrap(
      fmt::format("Period {} to {} ({}), amounts in {}.{}{}", s.from.str(), s.to.str(),
                  s.partial_year ? "the year so far" : "the whole year",
                  s.currency.empty() ? "the ledger's currency" : s.currency,
                  s.started_in_year ? fmt::format(" The ledger starts on {}.", s.inception.str())
                                    : std::string(),
                  s.benchmark ? fmt::format(" Benchmark: {}.", *s.benchmark) : std::string()),
      kWidth);
  for (const auto& sec : statement_sections(s)) {
    out += '\n';
    out += heading(sec.title, colour);
    if (sec.key == "cautions") {
      for (const auto& row : sec.rows) out += wrap("- " + display(row.front()), kWidth, "  ");
      continue;
    }
    Table table(sec.columns);
    for (std::size_t i = 0; i < sec.rows.size(); ++i) {
      if (std::find(sec.emphasised.begin(), sec.emphasised.end(), i) != sec.emphasised.end())
        table.add_rule();
      table.add_row(displayed(sec.rows[i]));
    }
    out += table.render({colour});
    for (const auto& note : sec.notes) out += wrap(printable(note), kWidth);
  }
  return out;
}

}  // namespace keel::report
