// How a posted transaction is shown, the same in `history` and `void`: one
// table row (or JSON object) with its kind, figures, ref and note; a row out
// of the books is marked "[void]", a void says what it voids.
#pragma once

#include <fmt/format.h>

#include <map>
#include <string>
#include <unordered_set>
#include <vector>

#include "cli/csv_rows.h"
#include "core/json.h"
#include "model/records.h"
#include "report/table.h"
#include "store/ledger_store.h"
#include "store/record_change_store.h"

namespace keel::cli {

struct LedgerNames {
  std::map<std::int64_t, std::string> accounts, symbols;
  std::vector<store::RecordChange> changes;  // by effective day
  static LedgerNames load(store::Database& db) {
    LedgerNames names;
    for (const auto& a : store::list_accounts(db)) names.accounts[a.id] = a.name;
    for (const auto& s : store::list_securities(db)) names.symbols[s.id] = s.symbol;
    names.changes = store::list_record_changes(db);
    return names;
  }
  std::string account(std::int64_t id) const { return find(accounts, id); }
  std::string symbol(const std::optional<std::int64_t>& id) const {
    return id ? find(symbols, *id) : std::string();
  }
  // The name or symbol as it was on `day`: the old value of the first change
  // that took effect after it, else the current one.
  std::string account_on(std::int64_t id, Date day) const {
    return as_of("account", "name", id, day, account(id));
  }
  std::string symbol_on(const std::optional<std::int64_t>& id, Date day) const {
    return id ? as_of("security", "symbol", *id, day, symbol(id)) : std::string();
  }

 private:
  std::string as_of(std::string_view record, std::string_view field, std::int64_t id, Date day,
                    std::string current) const {
    for (const auto& c : changes)
      if (c.record == record && c.field == field && c.record_id == id && c.effective > day)
        return c.old_value.value_or(current);
    return current;
  }
  static std::string find(const std::map<std::int64_t, std::string>& m, std::int64_t id) {
    const auto it = m.find(id);
    return it == m.end() ? std::string() : it->second;
  }
};

inline report::Table history_table() {
  using report::Align;
  // Names and notes shorten to fit a terminal; then the ref and the fee
  // make way, never the figures of the trade itself.
  return report::Table({{"id", Align::right},
                        {"date"},
                        {"account", Align::left, true},
                        {"kind"},
                        {"symbol"},
                        {"quantity", Align::right},
                        {"price", Align::right},
                        {"amount", Align::right},
                        {"fee", Align::right, false, 1},
                        {"ref", Align::left, false, 2},
                        {"note", Align::left, true}});
}

inline std::string history_opt(const std::optional<Decimal>& d) {
  return d ? d->str() : std::string();
}

// What every form of a row starts with: id, date, account and symbol as of
// the row's day, kind and quantity.
inline std::vector<std::string> history_head(const Transaction& x, const LedgerNames& names) {
  return {std::to_string(x.id),
          x.date.str(),
          names.account_on(x.account_id, x.date),
          std::string(to_string(x.kind)),
          names.symbol_on(x.security_id, x.date),
          history_opt(x.quantity)};
}

inline std::vector<std::string> history_cells(const Transaction& x, const LedgerNames& names,
                                              const std::unordered_set<std::int64_t>& voided) {
  std::string note = x.note.value_or("");
  if (x.voids_id) note = fmt::format("voids {}: {}", *x.voids_id, note);
  if (voided.count(x.id)) note = "[void] " + note;
  if (x.link_id) note += fmt::format(" (pair of {})", *x.link_id);
  // Figures in another currency than the account's carry its code; a rate
  // says how the row was settled or exchanged.
  const std::string in = x.currency ? " " + *x.currency : std::string();
  auto figure = [&](const std::optional<Decimal>& d) { return d ? d->str() + in : std::string(); };
  if (x.to_currency)
    note = fmt::format("into {} at {}{}{}", *x.to_currency, x.rate->str(), note.empty() ? "" : "; ",
                       note);
  else if (x.rate)
    note = fmt::format("settled at {}{}{}", x.rate->str(), note.empty() ? "" : "; ", note);
  auto cells = history_head(x, names);
  cells.insert(cells.end(), {figure(x.price), figure(x.amount),
                             x.fee.is_zero() ? "" : x.fee.str() + in, x.ref.value_or(""), note});
  return cells;
}

inline void history_json(JsonWriter& j, const Transaction& x, const LedgerNames& names,
                         const std::unordered_set<std::int64_t>& voided) {
  j.begin_object().member("id", static_cast<long long>(x.id)).member("date", x.date.str());
  j.member("account", names.account_on(x.account_id, x.date));
  j.member("kind", std::string(to_string(x.kind)))
      .member("symbol", names.symbol_on(x.security_id, x.date));
  j.member("quantity", history_opt(x.quantity)).member("price", history_opt(x.price));
  j.member("amount", history_opt(x.amount)).member("fee", x.fee);
  j.member("ref", x.ref.value_or("")).member("note", x.note.value_or(""));
  j.member("voided", voided.count(x.id) > 0);
  j.member("voids", x.voids_id).member("link", x.link_id);
  if (x.currency) j.member("currency", *x.currency);
  if (x.rate) j.member("rate", *x.rate);
  if (x.to_currency) j.member("to_currency", *x.to_currency);
  j.end_object();
}

// The same row for --csv, with the JSON member names as headings; figures
// are as stored, in the row's currency (empty: the account's).
inline CsvRows history_csv() {
  return CsvRows({"id", "date", "account", "kind", "symbol", "quantity", "price", "amount", "fee",
                  "ref", "note", "voided", "voids", "link", "currency", "rate", "to_currency"});
}

inline std::vector<std::string> history_csv_cells(const Transaction& x, const LedgerNames& names,
                                                  const std::unordered_set<std::int64_t>& voided) {
  auto id = [](const std::optional<std::int64_t>& v) {
    return v ? std::to_string(*v) : std::string();
  };
  auto cells = history_head(x, names);
  cells.insert(
      cells.end(),
      {history_opt(x.price), history_opt(x.amount), x.fee.str(), x.ref.value_or(""),
       x.note.value_or(""), voided.count(x.id) ? "yes" : "no", id(x.voids_id), id(x.link_id),
       x.currency.value_or(""), history_opt(x.rate), x.to_currency.value_or("")});
  return cells;
}

}  // namespace keel::cli
