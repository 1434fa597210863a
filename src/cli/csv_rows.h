// Tabular reports as CSV for scripts and spreadsheets (--csv): RFC 4180
// records with LF line ends (as `keel export` writes them), one heading row
// whose names are the report's JSON member names, decimals exactly as stored,
// and every cell through the export formula guard (io::formula_guarded), so a
// spreadsheet never runs a cell as a formula. No totals: a spreadsheet adds.
#pragma once

#include <initializer_list>
#include <string>
#include <string_view>
#include <vector>

#include "io/csv.h"

namespace keel::cli {

class CsvRows {
 public:
  CsvRows(std::initializer_list<std::string_view> names) : width_(names.size()) {
    io::append_csv_record(text_, std::vector<std::string_view>(names));
  }
  void add(const std::vector<std::string>& cells) {
    std::vector<std::string_view> fields(cells.begin(), cells.end());
    fields.resize(width_);
    io::append_export_record(text_, fields);
  }
  const std::string& text() const { return text_; }

 private:
  std::size_t width_;
  std::string text_;
};

}  // namespace keel::cli
