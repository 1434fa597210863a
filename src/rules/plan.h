// Plan: several rules run together over a household's accounts, read from a
// TOML file (every key and its default in docs/plan.md).
//
// Contract
//  - load_plan()/parse_plan() accept only the documented tables and keys; an
//    unknown key is refused with the nearest valid key. Every refusal is an
//    InputError "FILE:LINE:COLUMN: key 'KEY': why" naming the plan file.
//  - A part is a rule file (`rule`, a path relative to the plan file, read
//    with load_rule()) or a fixed sleeve (`fixed`: symbols and target weights
//    in percent of the part, summing to 100). A part either shares a pool
//    (`pool`, `share_pct`) or keeps accounts of its own (`accounts`, or a rule
//    file's scope.accounts); a part of its own gets a pool of its own, named
//    after the part, with a share of 100 %.
//  - The shares of one pool sum to exactly 100 %; an account belongs to one
//    pool only; part and pool names are unique.
//  - Shares and weights are kept as fractions of one (70 % -> 0.7).
//  - The tax keys ([tax] sell_from and gain_cap, part.place) default to
//    changing nothing; a gain cap below zero or with more than two decimals
//    is refused.
#pragma once

#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/decimal.h"
#include "rules/rule.h"

namespace keel::rules {

struct PlanPlace {
  std::int64_t line = 0, column = 0;
};

struct PlanPart {
  std::string name;
  std::optional<Rule> rule;     // a rule file's part
  std::vector<Sleeve> fixed;    // a fixed part: weights are fractions of the part
  std::size_t pool = 0;         // index into Plan::pools
  Decimal share{1};             // fraction of the pool's managed value
  bool place_deferred = false;  // place = "tax-deferred-first"
  PlanPlace at;                 // the part's table, for messages about it
  PlanPlace fixed_at;           // its `fixed` table
};

struct PlanPool {
  std::string name;
  std::vector<std::string> accounts;
  bool sell_unmanaged = false;  // unmanaged = "sell"
  bool own = false;             // made for one part's own accounts
  PlanPlace at;
  PlanPlace accounts_at;   // where its accounts are given
  bool from_rule = false;  // its part's rule file's scope.accounts
};

using PlanTax = TaxKeys;

struct Plan {
  std::string source;  // file name, for messages
  std::string text;    // the file exactly as read
  std::string name;
  PlanTax tax;
  std::vector<PlanPool> pools;
  std::vector<PlanPart> parts;
  // InputError "FILE:LINE:COLUMN: key 'KEY': WHY".
  [[noreturn]] void fail(PlanPlace at, std::string_view key, std::string_view why) const;
};

Plan load_plan(const std::filesystem::path& path);
// `folder` is where rule paths are read from (the plan file's folder).
Plan parse_plan(std::string_view toml_text, std::string source,
                const std::filesystem::path& folder);

}  // namespace keel::rules
