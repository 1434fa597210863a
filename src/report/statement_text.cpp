// The statement for a terminal: a heading, then each section as an aligned
// table with its notes wrapped to 100 columns.
#include <fmt/format.h>

#include <algorithm>

#include "core/text.h"
#include "report/statement_forms.h"
#include "report/wrap.h"

namespace keel::report {
namespace {

// Prose is wrapped to 100 columns, or to the terminal when it is narrower.
constexpr std::size_t kWidth = 100;

// A paragraph: its lines fit `width`, and it ends its last line.
std::string paragraph(const std::string& text, std::size_t width) {
  return wrap_to_width(text, width) + "\n";
}

// A bullet ("- text") whose continuation lines are indented under its text.
std::string bullet(const std::string& text, std::size_t width) {
  return paragraph("  " + text, width).replace(0, 2, "- ");
}

std::string heading(const std::string& title, bool colour) {
  const std::string rule(display_width(title), '=');
  if (colour) return "\x1b[1m" + printable(title) + "\x1b[0m\n" + rule + "\n";
  return printable(title) + "\n" + rule + "\n";
}

}  // namespace

std::string statement_text(const Statement& s, const Style& style) {
  const bool colour = style.colour;
  const std::size_t width = style.width == 0 ? kWidth : std::min(kWidth, style.width);
  std::string out = heading(fmt::format("keel statement {}: {}", s.year, s.scope), colour);
  out += paragraph(
      fmt::format("Period {} to {} ({}), amounts in {}.{}{}", s.from.str(), s.to.str(),
                  s.partial_year ? "the year so far" : "the whole year",
                  s.currency.empty() ? "the ledger's currency" : s.currency,
                  s.started_in_year ? fmt::format(" The ledger starts on {}.", s.inception.str())
                                    : std::string(),
                  s.benchmark ? fmt::format(" Benchmark: {}.", *s.benchmark) : std::string()),
      width);
  for (const auto& sec : statement_sections(s)) {
    out += '\n';
    out += heading(sec.title, colour);
    if (sec.key == "cautions") {
      for (const auto& row : sec.rows) out += bullet(display(row.front()), width);
      continue;
    }
    Table table(sec.columns);
    for (std::size_t i = 0; i < sec.rows.size(); ++i) {
      if (std::find(sec.emphasised.begin(), sec.emphasised.end(), i) != sec.emphasised.end())
        table.add_rule();
      table.add_row(displayed(sec.rows[i]));
    }
    out += table.render(style);
    for (const auto& note : sec.notes) out += paragraph(printable(note), width);
  }
  return out;
}

}  // namespace keel::report
