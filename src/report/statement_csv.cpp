// Writing statement files: the safe file writer and the CSV form (one file
// per section, RFC 4180, exact decimals, fractions for percentages).
#include <fcntl.h>
#include <fmt/format.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
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

void write_text_file(const std::filesystem::path& file, const std::string& content) {
  const auto parent = file.has_parent_path() ? file.parent_path() : std::filesystem::path(".");
  std::error_code ec;
  if (!std::filesystem::is_directory(parent, ec))
    throw InputError(fmt::format("cannot write '{}': the folder '{}' does not exist",
                                 printable(file.string()), printable(parent.string())));
  if (std::filesystem::is_directory(file, ec))
    throw InputError(fmt::format("cannot write '{}': it is a folder", printable(file.string())));
  std::string temp = (parent / fmt::format(".{}.keel-XXXXXX", file.filename().string())).string();
  const int fd = ::mkstemp(temp.data());
  if (fd < 0)
    throw InputError(
        fmt::format("cannot write '{}': {}", printable(file.string()), std::strerror(errno)));
  std::size_t done = 0;
  while (done < content.size()) {
    const ssize_t n = ::write(fd, content.data() + done, content.size() - done);
    if (n < 0) {
      const int err = errno;
      ::close(fd);
      ::unlink(temp.c_str());
      throw InputError(
          fmt::format("cannot write '{}': {}", printable(file.string()), std::strerror(err)));
    }
    done += static_cast<std::size_t>(n);
  }
  // Files keep the permissions an ordinary new file would get (mkstemp makes 0600).
  const mode_t mask = ::umask(0);
  ::umask(mask);
  ::fchmod(fd, 0666 & ~mask);
  if (::close(fd) != 0 || std::rename(temp.c_str(), file.c_str()) != 0) {
    const int err = errno;
    ::unlink(temp.c_str());
    throw InputError(
        fmt::format("cannot write '{}': {}", printable(file.string()), std::strerror(err)));
  }
}

void write_statement_csv(const Statement& s, const std::filesystem::path& dir) {
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
    write_text_file(dir / (sec.key + ".csv"), text);
  }
}

}  // namespace keel::report
