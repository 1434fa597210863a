// Writing statement files: the safe file writer and the CSV form (one file
// per section, RFC 4180, exact decimals, fractions for percentages).
#include <fmt/format.h>

#include <cstring>
#include <system_error>

#include "core/error.h"
#include "core/text.h"
#include "report/statement_forms.h"

namespace keel::report {
namespace {

std::string quoted(const std::string& field) {
  if (field.find_first_of(",\"\r\n") == std::string::npos) return field;
  std::string out = "\"";
  for (const char c : field) {
    if (c == '"') out += '"';
    out += c;
  }
  return out + "\"";
}

std::string csv_field(const Cell& cell) {
  switch (cell.kind) {
    case CellKind::text: {
      // A spreadsheet would run text starting with these as a formula.
      const bool formula_like = !cell.text.empty() && std::strchr("=+-@", cell.text.front());
      return quoted(formula_like ? "'" + cell.text : cell.text);
    }
    case CellKind::money:
    case CellKind::quantity:
      return cell.number.str();
    case CellKind::percent:
      return fmt::format("{}", cell.ratio);
    default:
      return display(cell);
  }
}

}  // namespace

void write_statement_csv(const Statement& s, const std::filesystem::path& dir,
                         const std::string& option) {
  std::error_code ec;
  if (!std::filesystem::exists(dir, ec)) {
    if (!std::filesystem::create_directory(dir, ec))
      throw InputError(fmt::format("cannot create the folder '{}': {}", printable(dir.string()),
                                   ec ? ec.message() : "its parent folder does not exist"));
  } else if (!std::filesystem::is_directory(dir, ec)) {
    throw InputError(fmt::format("'{}' exists and is not a folder", printable(dir.string())));
  }
  for (const auto& sec : statement_sections(s)) {
    std::string text;
    for (std::size_t c = 0; c < sec.columns.size(); ++c) {
      if (c) text += ',';
      text += quoted(sec.columns[c].heading);
    }
    text += "\r\n";
    for (const auto& row : sec.rows) {
      for (std::size_t c = 0; c < row.size(); ++c) {
        if (c) text += ',';
        text += csv_field(row[c]);
      }
      text += "\r\n";
    }
    OutputFile file(dir / (sec.key + ".csv"), {option});
    file.write(text);
    file.commit();
  }
}

}  // namespace keel::report
