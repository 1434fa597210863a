#include "io/table.h"

#include <fmt/format.h>

#include <algorithm>

#include "core/text.h"
#include "ledger/posting.h"

namespace keel::io {
namespace {

std::string_view trim(std::string_view s) {
  while (!s.empty() && s.front() == ' ') s.remove_prefix(1);
  while (!s.empty() && s.back() == ' ') s.remove_suffix(1);
  return s;
}

}  // namespace

TableReader::TableReader(CsvReader& csv, const Mapping& mapping, std::vector<ColumnSpec> columns,
                         ErrorList& errors)
    : csv_(csv), mapping_(mapping), errors_(errors) {
  for (auto& spec : columns) {
    Column c;
    c.name = spec.name;
    c.shown = spec.name;
    c.required = spec.required;
    if (auto it = mapping.defaults.find(c.name); it != mapping.defaults.end())
      c.default_value = it->second;
    if (auto it = mapping.values.find(c.name); it != mapping.values.end()) c.values = &it->second;
    c.negate =
        std::find(mapping.negate.begin(), mapping.negate.end(), c.name) != mapping.negate.end();
    if (mapping.sign_rule) {
      c.magnitude = mapping.sign_rule->from == c.name;
      c.derived = mapping.sign_rule->sets == c.name;
    }
    columns_.push_back(std::move(c));
  }
  for (std::size_t i = 0; i < columns_.size(); ++i)
    if (columns_[i].magnitude) sign_from_ = i;
  read_header();
}

void TableReader::read_header() {
  const std::size_t before = errors_.size();
  std::size_t skip = mapping_.skip_before_header;
  bool found = false;
  while (csv_.next(record_)) {
    if (skip > 0) {
      // Skipped lines are taken as physical lines, whatever they hold.
      --skip;
      continue;
    }
    if (record_.blank()) continue;
    found = true;
    break;
  }
  if (!found) {
    errors_.add(0, "", "no header row; the first line must name the columns");
    return;
  }
  if (record_.problem) {
    errors_.add(record_.line, "",
                fmt::format("header row, field {}: {}", record_.problem->field + 1,
                            record_.problem->reason));
    return;
  }
  width_ = record_.fields.size();
  std::vector<std::string> seen;
  for (std::size_t f = 0; f < record_.fields.size(); ++f) {
    const std::string_view shown = trim(record_.fields[f]);
    const std::string header = ascii_lower(shown);
    if (std::find(seen.begin(), seen.end(), header) != seen.end()) {
      errors_.add(record_.line, shown, "appears twice in the header");
      continue;
    }
    seen.push_back(header);
    if (mapping_.skip_when && mapping_.skip_when->column == header) skip_field_ = f;
    std::string keel_name = header;
    for (const auto& [to, from] : mapping_.rename)
      if (from == header) keel_name = to;
    auto it = std::find_if(columns_.begin(), columns_.end(),
                           [&](const Column& c) { return c.name == keel_name; });
    if (it != columns_.end() && !it->derived) {
      if (it->field != npos) {
        errors_.add(record_.line, shown, fmt::format("names column '{}' a second time", it->name));
        continue;
      }
      it->field = f;
      it->shown = std::string(shown);
      continue;
    }
    if (std::find(mapping_.ignore.begin(), mapping_.ignore.end(), header) !=
            mapping_.ignore.end() ||
        f == skip_field_)
      continue;
    std::string known;
    for (const auto& c : columns_)
      if (!c.derived) known += (known.empty() ? "" : ", ") + c.name;
    errors_.add(
        record_.line, shown,
        fmt::format("unknown column; expected {} (or list it under 'ignore' in a mapping)", known));
  }
  if (mapping_.skip_when && skip_field_ == npos)
    errors_.add(record_.line, mapping_.skip_when->column,
                "named by file.skip_rows_where but not in the header");
  if (mapping_.sign_rule && sign_from_ == npos)
    errors_.add(0, mapping_.sign_rule->from,
                "named by signs.kind_from_sign.column but not read by this import");
  for (const auto& c : columns_)
    if (c.required && c.field == npos && c.default_value.empty() && !c.derived)
      errors_.add(record_.line, c.name, "missing from the header");
  header_ok_ = errors_.size() == before;
}

bool TableReader::skipped() const {
  if (skip_field_ == npos || skip_field_ >= record_.fields.size()) return false;
  const auto cell = trim(record_.fields[skip_field_]);
  for (const auto& v : mapping_.skip_when->values)
    if (v == cell) return true;
  return false;
}

bool TableReader::next() {
  if (!header_ok_) return false;
  while (!errors_.full() && csv_.next(record_)) {
    if (record_.problem) {
      const std::size_t f = record_.problem->field;
      std::string col;
      for (const auto& c : columns_)
        if (c.field == f) col = c.shown;
      errors_.add(record_.line, col,
                  col.empty() ? fmt::format("field {}: {}", f + 1, record_.problem->reason)
                              : record_.problem->reason);
      continue;
    }
    if (record_.blank()) continue;
    if (record_.fields.size() != width_) {
      errors_.add(record_.line, "",
                  fmt::format("has {} fields but the header has {} (RFC 4180 section 2.4)",
                              record_.fields.size(), width_));
      continue;
    }
    if (skipped()) continue;
    ++rows_;
    return true;
  }
  return false;
}

std::string_view TableReader::raw(std::size_t col) const {
  const Column& c = columns_[col];
  if (c.derived && sign_from_ != npos) {
    const std::string_view v = raw(sign_from_);
    if (v.empty()) return {};
    const bool negative = (v.front() == '-') != columns_[sign_from_].negate;
    return negative ? mapping_.sign_rule->negative : mapping_.sign_rule->positive;
  }
  std::string_view v;
  // A cell guarded against spreadsheet formulas on export reads back as it was.
  if (c.field != npos) v = formula_unguarded(record_.fields[c.field]);
  if (v.empty()) v = c.default_value;
  if (c.values && !v.empty()) {
    lower_ = ascii_lower(v);
    if (auto it = c.values->find(lower_); it != c.values->end()) return it->second;
  }
  return v;
}

bool TableReader::not_future(std::size_t col, Date date) {
  const auto why = ledger::future_date(date);
  if (why)
    error(col, fmt::format("{}; give {} to import it anyway", *why, ledger::kAllowFutureFlag));
  return !why;
}

void TableReader::error(std::size_t col, std::string reason) {
  errors_.add(record_.line, col == npos ? std::string_view{} : columns_[col].shown,
              std::move(reason));
}

bool TableReader::text(std::size_t col, std::string_view& out) {
  out = raw(col);
  if (out.empty()) {
    error(col, "is empty");
    return false;
  }
  return true;
}

bool TableReader::date(std::size_t col, std::string& out) {
  const std::string_view v = raw(col);
  if (v.empty()) {
    error(col, "is empty; expected a date");
    return false;
  }
  why_.clear();
  if (mapping_.date_format.to_iso(v, out, why_)) return true;
  error(col, why_);
  return false;
}

bool TableReader::decimal(std::size_t col, std::string& out) {
  const Column& c = columns_[col];
  std::string_view v = raw(col);
  if (v.empty()) {
    error(col, "is empty; expected a number");
    return false;
  }
  why_.clear();
  if (mapping_.decimal_mark != '.' || mapping_.thousands != 0) {
    if (!normalize_number(v, mapping_.decimal_mark, mapping_.thousands, number_, why_)) {
      error(col, why_);
      return false;
    }
    v = number_;
  }
  if (!canonical_decimal(v, out, why_)) {
    error(col, why_);
    return false;
  }
  if (c.magnitude && !out.empty() && out.front() == '-') out.erase(0, 1);
  if (c.negate && !c.magnitude && out != "0") {
    if (out.front() == '-')
      out.erase(0, 1);
    else
      out.insert(0, 1, '-');
  }
  return true;
}

}  // namespace keel::io
