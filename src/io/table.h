// TableReader: CSV rows as typed fields with located errors.
//
// Contract
//  - The caller names the keel columns it understands (ColumnSpec); the first
//    row after the mapping's skip_lines is the header. Headers compare
//    case-insensitively (ASCII) after trimming spaces, may come in any order,
//    and are renamed by the mapping. A header that is neither known nor
//    ignored, a header given twice, or a required column that is missing (and
//    has no default or sign rule) is an error at the header line.
//  - next() moves to the next data row; blank lines and rows matched by
//    file.skip_rows_where are passed over; a CSV syntax problem or a row with
//    the wrong number of fields (RFC 4180 section 2.4) is recorded and the row
//    skipped. It returns false at the end, or once the ErrorList is full.
//  - Accessors apply the mapping (defaults, value maps, sign rules, date
//    format, decimal mark, thousands separator, negation), validate, write
//    keel's canonical text into the caller's buffer, and on failure record
//    "FILE:LINE: column 'x': reason" and return false. Nothing allocates per
//    row once buffers have grown.
//  - With the mapping's [actions], each row's action cell picks one rule: the
//    kind comes from it, and quantity, price, amount and fee come only from
//    the rule's columns, with its sign convention applied (a figure of the
//    wrong sign is an error naming the file's column and the value). Rows
//    whose action is in actions.skip are passed over and counted; an action
//    no rule books is an error on that row.
#pragma once

#include <cstdint>
#include <map>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "core/date.h"
#include "io/csv.h"
#include "io/errors.h"
#include "io/mapping.h"

namespace keel::io {

struct ColumnSpec {
  std::string name;  // keel's column name, lower case
  bool required = true;
};

class TableReader {
 public:
  TableReader(CsvReader& csv, const Mapping& mapping, std::vector<ColumnSpec> columns,
              ErrorList& errors);

  bool header_ok() const { return header_ok_; }
  bool next();
  std::uint64_t line() const { return record_.line; }
  std::uint64_t rows() const { return rows_; }  // data rows handed out so far

  // Whether the row has a value for column `col` (present and non-empty, or
  // defaulted or derived).
  bool has(std::size_t col) const { return !raw(col).empty(); }
  // The cell after defaults, sign rule and value map; empty if absent.
  std::string_view raw(std::size_t col) const;

  // A required non-empty text field.
  bool text(std::size_t col, std::string_view& out);
  bool date(std::size_t col, std::string& out);
  bool decimal(std::size_t col, std::string& out);
  void error(std::size_t col, std::string reason);  // col = npos: the row as a whole
  // Whether a posting `date` read from column `col` is today or earlier
  // (ledger::future_date); records the error, naming the override, if not.
  bool not_future(std::size_t col, Date date);
  // The same, showing the cell as written: "column 'x' = VALUE: reason".
  void error_with_value(std::size_t col, std::string reason);
  const std::string& header_name(std::size_t col) const { return columns_[col].shown; }
  // The file's header this row's column `col` was read from (for figures of
  // an action rule, the rule's column) and the cell as written.
  std::string shown(std::size_t col) const;
  std::string cell(std::size_t col) const;

  // With [actions]: rows passed over per action value (as first written), in
  // order of first appearance.
  const std::vector<std::pair<std::string, std::uint64_t>>& skipped_actions() const {
    return skipped_actions_;
  }

 private:
  struct Column {
    std::string name;
    std::string shown;  // the header as written in the file, or keel's name
    bool required = true;
    std::size_t field = npos;  // index in the record, npos if not in the file
    std::string default_value;
    const std::map<std::string, std::string>* values = nullptr;
    bool negate = false;
    bool magnitude = false;  // the signed column of a sign rule
    bool derived = false;    // set by a sign rule
    bool figure = false;     // with [actions]: read from the row's rule
  };
  static constexpr std::size_t npos = static_cast<std::size_t>(-1);

  void read_header();
  bool skipped() const;
  // With [actions]: picks the row's rule; false (error recorded, or counted
  // as skipped) when the row is not to be read.
  bool choose_rule();
  std::string_view field_text(const std::string& header) const;
  std::string_view figure(const FigureSource& source, std::string& buffer) const;
  const FigureSource* figure_source(std::size_t col) const;

  CsvReader& csv_;
  const Mapping& mapping_;
  ErrorList& errors_;
  std::vector<Column> columns_;
  std::size_t width_ = 0;
  std::size_t sign_from_ = npos;
  std::size_t skip_field_ = npos;
  bool header_ok_ = false;
  CsvRecord record_;
  std::uint64_t rows_ = 0;
  const ActionRule* rule_ = nullptr;
  std::size_t action_field_ = npos;
  std::map<std::string, std::size_t> rule_fields_;   // header (lower case) -> field
  std::map<std::string, std::string> header_shown_;  // header (lower case) -> as written
  std::vector<std::pair<std::string, std::uint64_t>> skipped_actions_;
  mutable std::string figure_buf_;
  mutable std::string lower_;
  std::string number_;
  std::string why_;
};

}  // namespace keel::io
