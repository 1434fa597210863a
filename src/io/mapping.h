// Mapping: how to read a CSV file whose layout is not keel's own, from a TOML
// file (keys documented in docs/import-formats.md).
//
// Contract
//  - load()/parse() accept only the documented tables and keys; anything else,
//    a wrong value type or an impossible value is an InputError naming the
//    mapping file, its line and the key.
//  - Column names compare case-insensitively (ASCII), like CSV headers.
//  - The mapping only describes the file; which keel columns exist is up to
//    the reader of each kind of record (see io/table.h).
//  - [actions] rules are checked when read: a rule sending an action to no
//    keel kind, or two rules (or a rule and actions.skip) that match the same
//    rows, are refused naming the rule's line.
#pragma once

#include <filesystem>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "io/fields.h"

namespace keel::io {

// Derives one keel column from the sign of another ("quantity below zero
// means a sell"); the signed column is then read as its magnitude.
struct SignRule {
  std::string from;  // keel column holding a signed number, e.g. "quantity"
  std::string sets;  // keel column to derive, e.g. "kind"
  std::string negative;
  std::string positive;
};

struct SkipRule {
  std::string column;               // a header of the file
  std::vector<std::string> values;  // rows whose cell equals one of these are skipped
};

// Where one figure of an action's rows comes from: a column of the file, or a
// pair of columns holding money in (credit) and money out (debit), read as
// credit minus debit.
struct FigureSource {
  std::string column;  // file header, lower case; empty for a credit/debit pair
  std::string credit, debit;
};

// How the file writes a figure's sign for one action: always positive (keel
// books it as written), always negative (keel books its magnitude), or
// either (keel books its magnitude: the kind gives the direction).
enum class FigureSign { positive, negative, either };

// One rule of an action column: rows whose action is one of `when` (and,
// with when_amount, whose amount has that sign) are booked as `kind`, their
// figures read from the rule's own columns.
struct ActionRule {
  std::size_t line = 0;           // the rule's line in the mapping file
  std::vector<std::string> when;  // action values as written in the mapping
  std::string kind;               // a keel kind, e.g. "dividend"
  std::optional<bool> when_amount_negative;
  std::map<std::string, FigureSource> figures;  // "quantity", "price", "amount", "fee"
  std::map<std::string, FigureSign> signs;      // per figure; absent: positive
};

struct ActionRules {
  std::string column;             // file header, lower case
  std::vector<std::string> skip;  // action values to pass over (counted)
  std::vector<ActionRule> rules;
};

struct Mapping {
  std::string source;      // where the mapping came from, for messages
  std::string applies_to;  // optional: "prices", "transactions", ...
  char delimiter = ',';
  std::size_t skip_before_header = 0;  // lines before the header row
  std::optional<SkipRule> skip_when;
  std::map<std::string, std::string> rename;  // keel column -> file header (lower-cased)
  std::vector<std::string> ignore;            // file headers to leave unread (lower-cased)
  DateFormat date_format;
  char decimal_mark = '.';
  char thousands = 0;  // 0: none
  // keel column -> (value in the file, lower-cased -> keel value)
  std::map<std::string, std::map<std::string, std::string>> values;
  std::vector<std::string> negate;  // keel columns whose sign the file writes reversed
  std::optional<SignRule> sign_rule;
  std::map<std::string, std::string> defaults;  // keel column -> value when absent or empty
  std::optional<ActionRules> actions;           // kinds from an action column

  static Mapping load(const std::filesystem::path& path);
  static Mapping parse(std::string_view toml_text, std::string source);
};

}  // namespace keel::io
