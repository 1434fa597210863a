// Rule: a written valuation rule, read from a TOML file (every key, its
// default and an example in docs/rules.md).
//
// Contract
//  - load_rule()/parse_rule() accept only the documented tables and keys. An
//    unknown key is refused with the nearest valid key (by edit distance); a
//    wrong type, a value out of range, or settings that contradict each other
//    (an exit threshold tighter than the entry, sleeves taking the whole pool,
//    a weight cap that cannot add up to one) are refused too. Every refusal is
//    an InputError "FILE:LINE: key 'table.key': why".
//  - Percent keys (*_pct) are percentages: 20 means 20 %; weights inside the
//    engine are fractions of one. Money keys are in the accounts' currency.
//  - Rule::fail() raises an error located at a key for problems found later,
//    when the rule meets the ledger (a metric with no data, a threshold that
//    selects nothing); a key left at its default is named with "(default X)".
#pragma once

#include <cstddef>
#include <filesystem>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "core/decimal.h"

namespace keel::rules {

enum class Universe { all_stocks, sector, list };
enum class Cheap { low, high };
enum class SelectBy { z, count, top_pct };
enum class Scheme { equal, tilt };
enum class LotOrder { highest_cost, long_held, losses_first };
enum class Correlation { pearson, spearman };
enum class TrackReturns { relative, absolute, zscore };

std::string_view to_string(SelectBy by);
std::string_view to_string(LotOrder order);

struct Sleeve {
  std::string symbol;
  Decimal weight;               // fraction of the pool's invested value, 0 < weight < 1
  bool place_deferred = false;  // place = "tax-deferred-first" (rules/tax_keys.h)
};

// One metric of a screen scoring several: its z-score counts with `weight`
// in the name's score.
struct MetricSpec {
  std::string name;
  Cheap cheap = Cheap::low;
  double weight = 1;  // above zero
};
enum class IfMissing { fail, score_available };
enum class Within { universe, sector, country };
enum class SmallGroups { fail, whole_universe };
std::string_view to_string(Within within);

struct ScreenRule {
  std::string metric = "pe";  // the first of metrics()
  Cheap cheap = Cheap::low;   // of the first metric
  // screen.metrics when given; empty: the one `metric` above.
  std::vector<MetricSpec> metric_list;
  IfMissing if_missing = IfMissing::fail;  // a name lacking some metric's figure
  Within within = Within::universe;        // z-scores within groups of this field
  int min_group_size = 5;
  SmallGroups small_groups = SmallGroups::fail;
  // Every metric the screen scores, the single `metric` as a list of one.
  std::vector<MetricSpec> metrics() const {
    return metric_list.empty() ? std::vector<MetricSpec>{{metric, cheap, 1}} : metric_list;
  }
  bool several() const { return metric_list.size() > 1; }
  int max_age_days = 180;  // between a figure's period date and the as-of day
  bool exclude_non_positive = true;
  int min_names = 5;  // fewer names passing the screen is an error
  // Percentiles (0..100) to clip values at before the z-score; unset = none.
  std::optional<std::pair<double, double>> winsorize_pct;
};

struct SelectionRule {
  SelectBy by = SelectBy::z;
  double z_max = -0.5;  // by z: a name enters when z <= z_max
  int count = 20;       // by count: the cheapest `count` names
  Decimal top_pct{20};  // by top_pct: the cheapest ceil(top_pct % of passing names)
  // Hysteresis: a name already held stays while its z <= exit_z.
  std::optional<double> exit_z;
};

struct WeightRule {
  Scheme scheme = Scheme::equal;
  double tilt = 1.0;      // tilt scheme: raw weight exp(-tilt * z)
  Decimal max_weight{1};  // fraction of the pool's invested value per screened name
  std::vector<Sleeve> sleeves;
  Decimal sleeve_total() const;
};

// A name's track record: over its own past, does its score rank its later
// returns? (rules/track_record.h computes it.)
struct TrackRecordRule {
  int window_months = 36;      // observations and their horizons fit in this many months
  int horizon_months = 12;     // each observation's return runs this many months
  double max_correlation = 0;  // kept while its correlation is at most this
  int min_observations = 24;
  Correlation method = Correlation::pearson;
  TrackReturns returns = TrackReturns::relative;
  // The most observations the window allows: one per month whose horizon
  // ends inside it.
  int max_observations() const { return window_months - horizon_months; }
};

// [tax] of a rule or plan file (read by rules/tax_keys.h).
struct TaxKeys {
  bool sell_deferred_first = false;  // sell_from = "tax-deferred-first"
  std::optional<Decimal> gain_cap;   // in the accounts' currency
  bool any() const { return sell_deferred_first || gain_cap.has_value(); }
};

struct TradingRule {
  Decimal drift_pct_points;  // 0 = off
  Decimal drift_rel_pct;     // 0 = off
  Decimal min_trade;         // smallest order value
  Decimal cash_reserve_pct;  // share of each account's value kept in cash
  bool fractional = false;   // quantities in steps of 10^-kFractionPlaces
  Decimal fee_fixed;
  Decimal fee_bps;
  LotOrder lot_order = LotOrder::highest_cost;
  static constexpr int kFractionPlaces = 4;
  // Estimated fee of an order of `value`, half-to-even to the cent.
  Decimal fee(const Decimal& value) const;
};

struct Rule {
  std::string source;  // file name, for messages
  std::string text;    // the file exactly as read
  std::string name;
  std::vector<std::string> accounts;
  Universe universe = Universe::all_stocks;
  std::vector<std::string> symbols;  // Universe::list
  std::string sector;                // Universe::sector
  ScreenRule screen;
  SelectionRule selection;
  WeightRule weights;
  TradingRule trading;
  std::optional<TrackRecordRule> track_record;
  int rebalance_months = 1;
  TaxKeys tax;  // [tax]: how a proposal sells across accounts of different tax status
  // Any tax key given ([tax] or a sleeve's place): the proposal then adds its caution.
  bool tax_keys() const;

  // Line of each key given in the file ("select.z_max" -> 14).
  std::map<std::string, std::int64_t> lines;
  // Keys set outside the file (with_setting), in the order given.
  struct Setting {
    std::string key, value, origin;  // origin: "OPTION KEY=VALUE", for messages
  };
  std::vector<Setting> settings;
  // InputError "FILE:LINE: key 'KEY': WHY", or "FILE: key 'KEY' (default D): WHY"
  // when the file left the key out.
  [[noreturn]] void fail(std::string_view key, std::string_view why) const;
  // The key's line and a "(default ...)" note when not given.
  std::string where(std::string_view key) const;
};

Rule load_rule(const std::filesystem::path& path);
Rule parse_rule(std::string_view toml_text, std::string source);
// The rule with `key` set to `value` (TOML: `10`, `-0.3`, `[5, 95]`, `"count"`;
// text that is not a TOML value is taken as a string), read again from its
// file with every earlier setting, through the same checks as the file. An
// unknown key, or a [[sleeve]] key (a rule may have several), is an
// InputError "OPTION: ..." with the nearest known key; a refused value reads
// "OPTION KEY=VALUE: key 'KEY': why", as the file's would.
Rule with_setting(const Rule& rule, std::string_view key, std::string_view value,
                  std::string_view option);

// Levenshtein distance between ASCII strings (insert, delete, substitute).
std::size_t edit_distance(std::string_view a, std::string_view b);
// The nearest of `choices` to `word`, if close enough to be a likely typo.
std::optional<std::string> nearest(std::string_view word, const std::vector<std::string>& choices);

}  // namespace keel::rules
