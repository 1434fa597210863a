// Located errors: what is wrong with one input file, line by line.
//
// Contract
//  - add() records "FILE:LINE: column 'x': reason" (column and line optional),
//    or "FILE:LINE: column 'x' = VALUE: reason" when given the cell's value;
//    at most `limit` entries are kept (50 by default) and full() says when the
//    caller should stop reading.
//  - raise() throws ImportRefused carrying every entry; its what() is a
//    one-line summary ("FILE: 3 errors; nothing was changed"), and lines()
//    gives the located messages for a caller to print one per line.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/error.h"

namespace keel::io {

struct LocatedError {
  std::uint64_t line = 0;  // 0: the file as a whole
  std::string column;      // empty: not about one column
  std::string reason;
  std::optional<std::string> value;  // the cell as written, shown as "column 'x' = value"
};

class ImportRefused : public InputError {
 public:
  ImportRefused(std::string summary, std::vector<std::string> lines)
      : InputError(std::move(summary)), lines_(std::move(lines)) {}
  const std::vector<std::string>& lines() const { return lines_; }

 private:
  std::vector<std::string> lines_;
};

class ErrorList {
 public:
  static constexpr std::size_t kDefaultLimit = 50;
  explicit ErrorList(std::string file, std::size_t limit = kDefaultLimit)
      : file_(std::move(file)), limit_(limit) {}

  void add(std::uint64_t line, std::string_view column, std::string reason);
  void add(std::uint64_t line, std::string_view column, std::string_view value, std::string reason);
  // Orders entries by line (stable), for errors found out of file order.
  void sort_by_line();
  bool full() const { return entries_.size() >= limit_; }
  bool empty() const { return entries_.empty(); }
  std::size_t size() const { return entries_.size(); }
  const std::vector<LocatedError>& entries() const { return entries_; }
  const std::string& file() const { return file_; }

  std::string format(const LocatedError& e) const;
  std::vector<std::string> lines() const;
  // Throws ImportRefused; `outcome` ends the summary, e.g. "nothing was changed".
  [[noreturn]] void raise(std::string_view outcome) const;

 private:
  std::string file_;
  std::size_t limit_;
  std::vector<LocatedError> entries_;
};

}  // namespace keel::io
