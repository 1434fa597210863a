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
    if (mapping.actions) {
      if (c.name == "kind") c.derived = true;
      for (auto f : {"quantity", "price", "amount", "fee"}) c.figure = c.figure || c.name == f;
      // A figure's sign is the rule's business, not the mapping-wide rules'.
      if (c.figure) c.magnitude = c.negate = false;
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
    header_shown_[header] = std::string(shown);
    if (mapping_.skip_when && mapping_.skip_when->column == header) skip_field_ = f;
    if (mapping_.actions) {
      bool used = header == mapping_.actions->column;
      if (used) action_field_ = f;
      for (const auto& rule : mapping_.actions->rules)
        for (const auto& [name, source] : rule.figures)
          if (source.column == header || source.credit == header || source.debit == header) {
            rule_fields_[header] = f;
            used = true;
          }
      if (used) continue;
    }
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
  if (mapping_.actions) {
    if (action_field_ == npos)
      errors_.add(record_.line, mapping_.actions->column,
                  "named by actions.column but not in the header");
    for (const auto& rule : mapping_.actions->rules)
      for (const auto& [name, source] : rule.figures)
        for (const auto* h : {&source.column, &source.credit, &source.debit})
          if (!h->empty() && !rule_fields_.count(*h) && !errors_.full()) {
            rule_fields_[*h] = npos;  // reported once
            errors_.add(record_.line, *h,
                        fmt::format("named by the mapping's rule on line {} but not in the header",
                                    rule.line));
          }
  }
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
    if (mapping_.actions && !choose_rule()) continue;
    ++rows_;
    return true;
  }
  return false;
}

std::string_view TableReader::field_text(const std::string& header) const {
  const auto it = rule_fields_.find(header);
  if (it == rule_fields_.end() || it->second == npos) return {};
  return trim(record_.fields[it->second]);
}

// A credit/debit pair reads as +credit or -debit (a debit is money out,
// whatever sign the file gives it).
std::string_view TableReader::figure(const FigureSource& source, std::string& buffer) const {
  if (!source.column.empty()) return field_text(source.column);
  const std::string_view credit = field_text(source.credit);
  if (!credit.empty()) return credit;
  std::string_view debit = field_text(source.debit);
  if (debit.empty()) return {};
  if (debit.front() == '-' || debit.front() == '+') debit.remove_prefix(1);
  // Built in a fresh string: appending to `buffer` in place makes GCC 12 -O3
  // warn that `debit` might overlap it (-Wrestrict, a false positive).
  std::string negated(1, '-');
  negated.append(debit.data(), debit.size());
  buffer = std::move(negated);
  return buffer;
}

const FigureSource* TableReader::figure_source(std::size_t col) const {
  if (!rule_ || !columns_[col].figure) return nullptr;
  const auto it = rule_->figures.find(columns_[col].name);
  return it == rule_->figures.end() ? nullptr : &it->second;
}

bool TableReader::choose_rule() {
  const ActionRules& actions = *mapping_.actions;
  const std::string_view action = trim(record_.fields[action_field_]);
  const std::string lower = ascii_lower(action);
  rule_ = nullptr;
  for (const auto& s : actions.skip)
    if (ascii_lower(s) == lower) {
      auto it = std::find_if(skipped_actions_.begin(), skipped_actions_.end(),
                             [&](const auto& p) { return ascii_lower(p.first) == lower; });
      if (it == skipped_actions_.end())
        skipped_actions_.emplace_back(std::string(action), 1);
      else
        ++it->second;
      return false;
    }
  const std::string& shown_action = header_shown_[actions.column];
  const ActionRule* named = nullptr;
  for (const auto& rule : actions.rules) {
    bool match = false;
    for (const auto& w : rule.when) match = match || ascii_lower(w) == lower;
    if (!match) continue;
    named = &rule;
    if (rule.when_amount_negative) {
      std::string buffer;
      const std::string_view amount = figure(rule.figures.at("amount"), buffer);
      const bool negative = !amount.empty() && amount.front() == '-';
      if (amount.empty() || negative != *rule.when_amount_negative) continue;
    }
    rule_ = &rule;
    break;
  }
  if (!rule_) {
    std::string known;
    for (const auto& rule : actions.rules)
      for (const auto& w : rule.when)
        if (known.find("'" + w + "'") == std::string::npos)
          known += (known.empty() ? "'" : ", '") + w + "'";
    errors_.add(record_.line, shown_action, action,
                named ? fmt::format("the amount's sign matches none of the rules for this action "
                                    "(rule on line {})",
                                    named->line)
                      : fmt::format("no rule of the mapping books this action (rules: {}); add a "
                                    "rule or list it under actions.skip",
                                    known));
    return false;
  }
  // A credit/debit pair holds one figure: money in or money out, not both.
  for (const auto& [name, source] : rule_->figures) {
    if (source.column.empty() && !field_text(source.credit).empty() &&
        !field_text(source.debit).empty()) {
      errors_.add(record_.line, "",
                  fmt::format("columns '{}' and '{}' are both filled; a row has money in or "
                              "money out, not both",
                              printable(header_shown_[source.credit]),
                              printable(header_shown_[source.debit])));
      return false;
    }
  }
  return true;
}

std::string TableReader::shown(std::size_t col) const {
  if (const FigureSource* f = figure_source(col)) {
    if (!f->column.empty()) return header_shown_.at(f->column);
    return header_shown_.at(field_text(f->credit).empty() ? f->debit : f->credit);
  }
  if (mapping_.actions && columns_[col].name == "kind")
    return header_shown_.at(mapping_.actions->column);
  return columns_[col].shown;
}

std::string TableReader::cell(std::size_t col) const {
  if (const FigureSource* f = figure_source(col)) {
    if (!f->column.empty()) return std::string(field_text(f->column));
    const auto credit = field_text(f->credit);
    return std::string(credit.empty() ? field_text(f->debit) : credit);
  }
  if (mapping_.actions && columns_[col].name == "kind")
    return std::string(trim(record_.fields[action_field_]));
  const Column& c = columns_[col];
  return c.field == npos ? std::string(raw(col)) : std::string(record_.fields[c.field]);
}

std::string_view TableReader::raw(std::size_t col) const {
  const Column& c = columns_[col];
  if (mapping_.actions && c.name == "kind") return rule_ ? std::string_view(rule_->kind) : "";
  if (c.figure) {
    const FigureSource* f = figure_source(col);
    return f ? figure(*f, figure_buf_) : std::string_view{};
  }
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
  if (col != npos && figure_source(col)) return error_with_value(col, std::move(reason));
  errors_.add(record_.line, col == npos ? std::string() : shown(col), std::move(reason));
}

void TableReader::error_with_value(std::size_t col, std::string reason) {
  errors_.add(record_.line, shown(col), cell(col), std::move(reason));
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
  if (figure_source(col)) {
    const auto it = rule_->signs.find(c.name);
    FigureSign sign = it == rule_->signs.end() ? FigureSign::positive : it->second;
    // A credit/debit pair says the direction itself: unless the rule says
    // otherwise, money out (a debit) is expected for kinds that take money out.
    if (it == rule_->signs.end() && figure_source(col)->column.empty()) {
      const std::string& k = rule_->kind;
      const bool out_kind =
          k == "withdrawal" || k == "tax" || k == "fee" || k == "buy" || k == "transfer_out";
      sign = out_kind ? FigureSign::negative : FigureSign::positive;
    }
    const bool negative = out.front() == '-';
    const bool zero = out == "0";
    if (negative && sign == FigureSign::positive) {
      error_with_value(col, fmt::format("a {} row's {} must be positive here; if the file writes "
                                        "it negative, say sign = \"negative\" or \"either\" in "
                                        "the mapping's rule on line {}",
                                        rule_->kind, c.name, rule_->line));
      return false;
    }
    if (!negative && !zero && sign == FigureSign::negative) {
      error_with_value(col, fmt::format("a {} row's {} is written negative in this file (the "
                                        "mapping's rule on line {}); a positive one is not a {}",
                                        rule_->kind, c.name, rule_->line, rule_->kind));
      return false;
    }
    if (negative) out.erase(0, 1);
  }
  if (c.negate && !c.magnitude && out != "0") {
    if (out.front() == '-')
      out.erase(0, 1);
    else
      out.insert(0, 1, '-');
  }
  return true;
}

}  // namespace keel::io
