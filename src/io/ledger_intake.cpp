#include "io/ledger_intake.h"

#include <fmt/format.h>

#include <algorithm>
#include <map>
#include <set>
#include <unordered_map>
#include <unordered_set>

#include "core/currency.h"
#include "core/error.h"
#include "core/files.h"
#include "core/json.h"
#include "core/text.h"
#include "io/csv.h"
#include "io/errors.h"
#include "io/ofx.h"
#include "io/sha256.h"
#include "io/table.h"
#include "ledger/accounts.h"
#include "ledger/action_posting.h"
#include "ledger/period.h"
#include "ledger/posting.h"
#include "model/security.h"
#include "store/action_store.h"
#include "store/ledger_store.h"
#include "store/market_data.h"
#include "store/period_store.h"
#include "store/record_change_store.h"

namespace keel::io {
namespace {

constexpr std::size_t npos = static_cast<std::size_t>(-1);

enum TxnColumn : std::size_t {
  kDate,
  kAccount,
  kKind,
  kSymbol,
  kQuantity,
  kPrice,
  kAmount,
  kFee,
  kRef,
  kNote,
  kToAccount,
  kLots,
  kAcquired,
  kCurrency,
  kRate,
  kToCurrency,
};

// Columns an export writes for a ledger all in its accounts' own
// currencies; one with a row in another currency also gets the last three.
constexpr std::size_t kExportedColumns = kAcquired + 1;
constexpr std::size_t kExportedCurrencyColumns = kToCurrency + 1;

const std::vector<ColumnSpec>& transaction_columns() {
  static const std::vector<ColumnSpec> columns = {{"date"},
                                                  {"account"},
                                                  {"kind"},
                                                  {"symbol", false},
                                                  {"quantity", false},
                                                  {"price", false},
                                                  {"amount", false},
                                                  {"fee", false},
                                                  {"ref", false},
                                                  {"note", false},
                                                  {"to_account", false},
                                                  {"lots", false},
                                                  {"acquired", false},
                                                  {"currency", false},
                                                  {"rate", false},
                                                  {"to_currency", false}};
  return columns;
}

// The request's field names (as ShapeError gives them) and their columns.
constexpr std::pair<const char*, TxnColumn> kFieldColumns[] = {
    {"symbol", kSymbol},        {"quantity", kQuantity}, {"price", kPrice},
    {"amount", kAmount},        {"fee", kFee},           {"ref", kRef},
    {"to-account", kToAccount}, {"lots", kLots},         {"acquired", kAcquired},
    {"currency", kCurrency},    {"rate", kRate},         {"to-currency", kToCurrency},
};

Mapping checked_mapping(const ImportOptions& options, std::string_view what) {
  Mapping mapping = options.mapping ? *options.mapping : Mapping{};
  if (!mapping.applies_to.empty() && mapping.applies_to != what)
    throw InputError(fmt::format("{}: this mapping is for importing {}, not {}",
                                 printable(mapping.source), printable(mapping.applies_to), what));
  return mapping;
}

// What makes two rows of one account "the same line" when they carry no ref.
std::string content_key(const Transaction& t, const std::string& symbol) {
  auto opt = [](const std::optional<Decimal>& d) { return d ? d->str() : std::string(); };
  std::string text =
      fmt::format("{}\x1f{}\x1f{}\x1f{}\x1f{}\x1f{}\x1f{}", t.date.str(), to_string(t.kind), symbol,
                  opt(t.quantity), opt(t.price), opt(t.amount), t.fee.str());
  // Only rows in another currency carry these, so older keys stay as they were.
  if (t.currency || t.rate || t.to_currency)
    text += fmt::format("\x1f{}\x1f{}\x1f{}", t.currency.value_or(""), opt(t.rate),
                        t.to_currency.value_or(""));
  return sha256_hex(text);
}

std::string content_key(const ledger::PostRequest& r) {
  Transaction t;
  t.date = r.date;
  t.kind = r.kind;
  t.quantity = r.quantity;
  t.price = r.price;
  t.amount = r.amount;
  t.fee = r.fee.value_or(Decimal());
  t.currency = r.currency;
  t.rate = r.rate;
  t.to_currency = r.to_currency;
  return content_key(t, r.symbol.value_or(""));
}

// A booked row as a request would give it, field by field, for comparing a
// re-imported line with what the ledger holds. The note is left out: a
// broker's memo, or a note typed by hand, says nothing about the money.
using Fields = std::vector<std::pair<std::string, std::string>>;

Fields fields_of(const ledger::PostRequest& r) {
  auto opt = [](const std::optional<Decimal>& d) { return d ? d->str() : std::string(); };
  return {{"date", r.date.str()},
          {"kind", std::string(to_string(r.kind))},
          {"symbol", r.symbol.value_or("")},
          {"quantity", opt(r.quantity)},
          {"price", opt(r.price)},
          {"amount", opt(r.amount)},
          {"fee", r.fee && !r.fee->is_zero() ? r.fee->str() : ""},
          {"to_account", r.to_account.value_or("")},
          {"lots", r.lots.empty() ? "" : format_lot_picks(r.lots)},
          {"acquired", r.acquired ? r.acquired->str() : ""},
          {"rate", opt(r.rate)},
          {"to_currency", r.to_currency.value_or("")}};
}

struct BookedRow {
  std::int64_t id = 0;
  Fields fields;
};

// Keys of every booked row (voided ones too: a line once booked stays booked),
// and for each ref its live row.
struct BookedKeys {
  std::set<std::pair<std::int64_t, std::string>> refs;
  std::set<std::pair<std::int64_t, std::string>> contents;
  std::map<std::pair<std::int64_t, std::string>, BookedRow> live;

  static BookedKeys load(store::Database& db) {
    std::unordered_map<std::int64_t, std::string> symbols, accounts;
    for (const auto& s : store::list_securities(db)) symbols[s.id] = s.symbol;
    for (const auto& a : store::list_accounts(db)) accounts[a.id] = a.name;
    const auto txns = store::list_transactions(db);
    const auto voided = voided_ids(txns);
    std::unordered_map<std::int64_t, std::int64_t> receiver_of;
    for (const auto& t : txns)
      if (t.link_id) receiver_of[*t.link_id] = t.account_id;
    BookedKeys keys;
    for (const auto& t : txns) {
      if (t.kind == TxnKind::void_entry || t.link_id) continue;
      const std::string symbol = t.security_id ? symbols[*t.security_id] : "";
      if (t.ref) {
        keys.refs.emplace(t.account_id, *t.ref);
        if (!voided.count(t.id)) {
          ledger::PostRequest r;
          r.date = t.date;
          r.kind = t.kind;
          if (t.security_id) r.symbol = symbol;
          r.quantity = t.quantity;
          r.price = t.price;
          r.amount = t.amount;
          r.fee = t.fee;
          if (auto it = receiver_of.find(t.id); it != receiver_of.end())
            r.to_account = accounts[it->second];
          r.lots = t.lots;
          r.acquired = t.acquired;
          r.rate = t.rate;
          r.to_currency = t.to_currency;
          keys.live[{t.account_id, *t.ref}] = BookedRow{t.id, fields_of(r)};
        }
      }
      keys.contents.emplace(t.account_id, content_key(t, symbol));
    }
    return keys;
  }
};

std::optional<std::string> optional_text(TableReader& t, std::size_t col) {
  if (!t.has(col)) return std::nullopt;
  return std::string(t.raw(col));
}

// Reads one row into a request; false (with errors recorded) if a field is bad.
bool read_request(TableReader& t, IntakeRow& row) {
  ledger::PostRequest& r = row.request;
  std::string buf;
  bool ok = true;
  if (t.date(kDate, buf)) {
    r.date = Date::parse(buf);
  } else {
    ok = false;
  }
  std::string_view text;
  if (t.text(kAccount, text))
    r.account = std::string(text);
  else
    ok = false;
  if (t.text(kKind, text)) {
    try {
      r.kind = parse_txn_kind(ascii_lower(text));
    } catch (const InputError& e) {
      t.error(kKind, e.what());
      ok = false;
    }
  } else {
    ok = false;
  }
  r.symbol = optional_text(t, kSymbol);
  auto decimal = [&](std::size_t col, std::optional<Decimal>& out) {
    if (!t.has(col)) return;
    if (t.decimal(col, buf))
      out = Decimal::parse(buf);
    else
      ok = false;
  };
  decimal(kQuantity, r.quantity);
  decimal(kPrice, r.price);
  decimal(kAmount, r.amount);
  decimal(kFee, r.fee);
  r.ref = optional_text(t, kRef);
  r.note = optional_text(t, kNote);
  r.to_account = optional_text(t, kToAccount);
  if (t.has(kLots)) {
    try {
      r.lots = parse_lot_picks(t.raw(kLots));
    } catch (const InputError& e) {
      t.error(kLots, e.what());
      ok = false;
    }
  }
  if (t.has(kAcquired)) {
    if (t.date(kAcquired, buf))
      r.acquired = Date::parse(buf);
    else
      ok = false;
  }
  auto currency = [&](std::size_t col, std::optional<std::string>& out) {
    if (!t.has(col)) return;
    try {
      out = parse_currency(t.raw(col), "");
    } catch (const InputError& e) {
      t.error_with_value(col, e.what());
      ok = false;
    }
  };
  currency(kCurrency, r.currency);
  currency(kToCurrency, r.to_currency);
  decimal(kRate, r.rate);
  if (r.rate && !r.rate->is_positive()) {
    t.error_with_value(kRate, "a rate must be greater than zero");
    ok = false;
  }
  for (const auto& [field, col] : kFieldColumns)
    if (t.has(col)) row.sources[field] = {t.shown(col), t.cell(col)};
  row.sources["ref"] = {t.shown(kRef), t.cell(kRef)};
  row.sources["account"] = {t.shown(kAccount), t.cell(kAccount)};
  return ok;
}

LedgerImportSummary new_summary(const std::filesystem::path& file, const ImportOptions& options) {
  LedgerImportSummary sum;
  sum.file = input_name(file);
  sum.dry_run = options.dry_run;
  return sum;
}

void record_run(store::Database& db, std::string_view what, const std::filesystem::path& file,
                LedgerImportSummary& sum) {
  store::ImportRun run;
  run.what = std::string(what);
  run.file_name = is_standard_input(file) ? input_name(file) : file.filename().string();
  run.file_sha256 = sum.sha256;
  run.rows_read = static_cast<std::int64_t>(sum.rows);
  run.rows_added = static_cast<std::int64_t>(sum.added);
  sum.run_id = store::record_import_run(db, run);
}

// "price 1250 -> 1252.5, fee 4.95 -> 5.95"
std::string differences(const Fields& booked, const Fields& row) {
  std::string out;
  for (std::size_t i = 0; i < booked.size(); ++i) {
    if (booked[i].second == row[i].second) continue;
    auto shown = [](const std::string& v) { return v.empty() ? std::string("(none)") : v; };
    out += fmt::format("{}{} {} -> {}", out.empty() ? "" : ", ", booked[i].first,
                       printable(shown(booked[i].second)), printable(shown(row[i].second)));
  }
  return out;
}

// A ShapeError about a field, told in the file's words.
void add_shape_error(ErrorList& errors, const IntakeRow& row, const ledger::ShapeError& e) {
  const auto it = row.sources.find(e.field());
  if (it == row.sources.end() || it->second.first.empty()) {
    errors.add(row.line, "", e.what());
    return;
  }
  errors.add(row.line, it->second.first, it->second.second,
             fmt::format("{}: {}", to_string(row.request.kind), e.reason()));
}

}  // namespace

void book_rows(store::Database& db, const std::filesystem::path& file, std::vector<IntakeRow> rows,
               const ImportOptions& options, ErrorList& errors, LedgerImportSummary& sum) {
  const BookedKeys booked = BookedKeys::load(db);
  std::map<std::pair<std::string, std::string>, std::uint64_t> refs_in_file, contents_in_file;
  std::vector<IntakeRow> fresh_rows;
  std::vector<std::int64_t> replaces;  // per fresh row: the booked row it corrects, or 0
  for (const auto& row : rows)
    if (row.request.symbol && !store::find_security(db, *row.request.symbol))
      if (const auto now = store::find_security_by_former_symbol(db, *row.request.symbol))
        sum.notes.push_back(fmt::format("{}:{}: '{}' is a former symbol of '{}'; booked to it",
                                        file.string(), row.line, printable(*row.request.symbol),
                                        printable(now->symbol)));
  for (auto& row : rows) {
    ledger::PostRequest& r = row.request;
    r.allow_future = options.allow_future;
    const auto account = store::find_account(db, r.account);
    if (!account) {
      const auto& src = row.sources["account"];
      errors.add(row.line, src.first, fmt::format("unknown account '{}'", printable(r.account)));
      continue;
    }
    // Exactly once: against the ledger, then within this file.
    const bool has_ref = r.ref.has_value();
    const std::string key = has_ref ? *r.ref : content_key(r);
    auto& seen = has_ref ? refs_in_file : contents_in_file;
    const auto [it, fresh] = seen.emplace(std::make_pair(r.account, key), row.line);
    if (!fresh) {
      errors.add(row.line, has_ref ? row.sources["ref"].first : "",
                 has_ref ? fmt::format("reference '{}' also appears on line {}", printable(key),
                                       it->second)
                         : fmt::format("the same {} also appears on line {}; give each a ref to "
                                       "book both",
                                       to_string(r.kind), it->second));
      continue;
    }
    std::int64_t corrects = 0;
    if (has_ref) {
      const auto live = booked.live.find({account->id, key});
      if (live != booked.live.end()) {
        const std::string diff = differences(live->second.fields, fields_of(r));
        if (diff.empty()) {
          ++sum.already_booked;
          continue;
        }
        if (!options.book_corrections) {
          errors.add(row.line, row.sources["ref"].first, key,
                     fmt::format("already booked as transaction {} with other content: {}; to "
                                 "book the change, import with --book-corrections (voids {} and "
                                 "books this row)",
                                 live->second.id, diff, live->second.id));
          continue;
        }
        corrects = live->second.id;
      } else if (booked.refs.count({account->id, key})) {
        ++sum.already_booked;  // booked once and voided by hand: stays booked
        continue;
      }
    } else if (booked.contents.count({account->id, key})) {
      ++sum.already_booked;
      continue;
    }
    if (!has_ref) r.row_hash = key;
    fresh_rows.push_back(std::move(row));
    replaces.push_back(corrects);
  }
  if (!errors.empty()) errors.raise("nothing was changed");

  sum.added = static_cast<std::uint64_t>(std::count(replaces.begin(), replaces.end(), 0));
  for (std::size_t i = 0; i < fresh_rows.size() && sum.preview.size() < kPreviewRows; ++i)
    sum.preview.push_back(fresh_rows[i]);
  if (!fresh_rows.empty()) record_run(db, "transactions", file, sum);
  const ledger::PeriodLocks locks = ledger::PeriodLocks::load(db);
  std::optional<store::ImportLinks> links;
  if (sum.run_id) links.emplace(db, *sum.run_id);
  std::unordered_map<std::int64_t, std::string> pending;
  for (std::size_t i = 0; i < fresh_rows.size(); ++i) {
    IntakeRow& row = fresh_rows[i];
    const std::string origin = fmt::format("{}:{}", printable(input_name(file)), row.line);
    try {
      if (replaces[i] != 0) {
        const std::string reason =
            fmt::format("corrected by {} line {}", file.filename().string(), row.line);
        for (auto id : ledger::write_void_unchecked(db, replaces[i], reason, &locks)) {
          pending[id] = origin;
          links->add(id, store::ImportRole::void_entry);
        }
        const std::string ref = *row.request.ref;
        row.request.ref.reset();  // the voided row keeps the ref in txn
        const auto ids = ledger::write_unchecked(db, row.request, &locks);
        store::insert_correction(db, {ids.front(), replaces[i], ref, *sum.run_id});
        for (auto id : ids) {
          pending[id] = origin;
          links->add(id, store::ImportRole::correction);
        }
        ++sum.corrected;
        continue;
      }
      for (auto id : ledger::write_unchecked(db, row.request, &locks)) {
        pending[id] = origin;
        links->add(id, store::ImportRole::added);
      }
    } catch (const ledger::ShapeError& e) {
      add_shape_error(errors, row, e);
    } catch (const InputError& e) {
      errors.add(row.line, "", e.what());
    }
    if (errors.full()) break;
  }
  if (!errors.empty()) errors.raise("nothing was changed");
  try {
    ledger::check_ledger(db, pending);
  } catch (const InputError& e) {
    throw ImportRefused(
        fmt::format("{}: 1 error; nothing was changed", printable(input_name(file))), {e.what()});
  }
}

LedgerImportSummary import_transactions(store::Database& db, const std::filesystem::path& file,
                                        const ImportOptions& options) {
  if (is_ofx_file(file)) return import_ofx_transactions(db, file, options);
  if (options.account)
    throw InputError(
        "--account: only an OFX statement needs it; a CSV row names its account "
        "(or the mapping's defaults do)");
  const Mapping mapping = checked_mapping(options, "transactions");
  CsvReader csv = open_import_csv(file, mapping, options);
  ErrorList errors(input_name(file));
  LedgerImportSummary sum = new_summary(file, options);

  store::WriteTransaction tx(db);
  std::vector<IntakeRow> rows;
  {
    TableReader t(csv, mapping, transaction_columns(), errors);
    while (t.next()) {
      IntakeRow row;
      row.line = t.line();
      if (!read_request(t, row)) continue;
      if (!options.allow_future && !t.not_future(kDate, row.request.date)) continue;
      const auto account = store::find_account(db, row.request.account);
      if (!account) {
        t.error(kAccount, fmt::format("unknown account '{}'", printable(row.request.account)));
        continue;
      }
      rows.push_back(std::move(row));
    }
    sum.rows = t.rows();
    sum.skipped = t.skipped_actions();
  }
  sum.sha256 = csv.sha256_hex();
  if (!errors.empty()) errors.raise("nothing was changed");
  book_rows(db, file, std::move(rows), options, errors, sum);
  if (options.dry_run) return sum;  // rolls back
  tx.commit();
  return sum;
}

LedgerImportSummary import_accounts(store::Database& db, const std::filesystem::path& file,
                                    const ImportOptions& options) {
  const Mapping mapping = checked_mapping(options, "accounts");
  CsvReader csv = open_import_csv(file, mapping, options);
  ErrorList errors(input_name(file));
  LedgerImportSummary sum = new_summary(file, options);
  store::WriteTransaction tx(db);
  {
    TableReader t(csv, mapping,
                  {{"name"},
                   {"currency"},
                   {"basis", false},
                   {"allow_negative_cash", false},
                   {"tax_status", false}},
                  errors);
    std::set<std::string> names;
    while (t.next()) {
      std::string_view name, currency;
      if (!t.text(0, name) || !t.text(1, currency)) continue;
      try {
        Account a;
        a.name = std::string(name);
        a.currency = normalize_currency(currency);
        if (t.has(2)) a.basis = parse_basis_method(ascii_lower(t.raw(2)));
        if (t.has(3)) {
          const std::string flag = ascii_lower(t.raw(3));
          if (flag != "yes" && flag != "no" && flag != "true" && flag != "false")
            throw InputError("allow_negative_cash must be yes or no");
          a.allow_negative_cash = flag == "yes" || flag == "true";
        }
        const TaxStatus status =
            t.has(4) ? parse_tax_status(ascii_lower(t.raw(4))) : TaxStatus::taxable;
        if (!names.insert(a.name).second) {
          t.error(0, fmt::format("account '{}' appears twice in this file", printable(a.name)));
          continue;
        }
        if (const auto existing = store::find_account(db, a.name)) {
          if (existing->currency != a.currency || existing->basis != a.basis ||
              existing->allow_negative_cash != a.allow_negative_cash)
            t.error(0, fmt::format("account '{}' already exists with other settings",
                                   printable(a.name)));
          else
            ++sum.already_booked;
          continue;
        }
        ledger::add_account(db, a, status);
        ++sum.added;
      } catch (const InputError& e) {
        t.error(npos, e.what());
      }
    }
    sum.rows = t.rows();
  }
  sum.sha256 = csv.sha256_hex();
  if (!errors.empty()) errors.raise("nothing was changed");
  if (options.dry_run) return sum;
  if (sum.added > 0) record_run(db, "accounts", file, sum);
  tx.commit();
  return sum;
}

LedgerImportSummary import_actions(store::Database& db, const std::filesystem::path& file,
                                   const ImportOptions& options) {
  const Mapping mapping = checked_mapping(options, "actions");
  CsvReader csv = open_import_csv(file, mapping, options);
  ErrorList errors(file.string());
  LedgerImportSummary sum = new_summary(file, options);
  store::WriteTransaction tx(db);
  {
    enum { kDate, kSymbol, kAction, kInto, kRatio, kCash, kPercent, kInLieu, kNote };
    TableReader t(csv, mapping,
                  {{"date"},
                   {"symbol"},
                   {"action"},
                   {"into", false},
                   {"ratio", false},
                   {"cash", false},
                   {"cost_percent", false},
                   {"cash_in_lieu", false},
                   {"note", false}},
                  errors);
    const std::map<std::string, std::size_t> column_of{{"into", kInto},
                                                       {"ratio", kRatio},
                                                       {"cash", kCash},
                                                       {"cost-percent", kPercent},
                                                       {"cash-in-lieu", kInLieu}};
    while (t.next()) {
      std::string date, ratio, cash, percent, in_lieu;
      std::string_view symbol, action;
      if (!t.date(kDate, date) || !t.text(kSymbol, symbol) || !t.text(kAction, action)) continue;
      if ((t.has(kRatio) && !t.decimal(kRatio, ratio)) ||
          (t.has(kCash) && !t.decimal(kCash, cash)) ||
          (t.has(kPercent) && !t.decimal(kPercent, percent)))
        continue;
      ledger::ActionRequest r;
      try {
        r.kind = parse_action_kind(ascii_lower(action));
      } catch (const InputError& e) {
        t.error(kAction, e.what());
        continue;
      }
      r.date = Date::parse(date);
      if (!options.allow_future && !t.not_future(kDate, r.date)) continue;
      r.allow_future = true;  // checked just above, naming the column
      r.symbol = std::string(symbol);
      if (t.has(kInto)) r.target = std::string(t.raw(kInto));
      if (!ratio.empty()) r.ratio = Decimal::parse(ratio);
      if (!cash.empty()) r.cash = Decimal::parse(cash);
      if (!percent.empty()) r.cost_percent = Decimal::parse(percent);
      r.cash_in_lieu = t.has(kInLieu);  // its value is the price per unit
      if (t.has(kInLieu)) {
        if (!t.decimal(kInLieu, in_lieu)) continue;
        r.in_lieu_price = Decimal::parse(in_lieu);
      }
      if (t.has(kNote)) r.note = std::string(t.raw(kNote));
      r.market_only = options.market_only;
      try {
        ledger::write_action_unchecked(db, r);
        ++sum.added;
      } catch (const ledger::ShapeError& e) {
        const auto it = column_of.find(e.field());
        t.error(it == column_of.end() ? npos : it->second,
                fmt::format("{}: {}", to_string(r.kind), e.reason()));
      } catch (const InputError& e) {
        t.error(npos, e.what());
      }
    }
    sum.rows = t.rows();
  }
  sum.sha256 = csv.sha256_hex();
  if (!errors.empty()) errors.raise("nothing was changed");
  ledger::check_ledger(db);
  if (options.dry_run) return sum;
  if (sum.added > 0) record_run(db, "actions", file, sum);
  tx.commit();
  return sum;
}

namespace {

void write_rows(ExportFormat format, const std::vector<std::string>& header,
                const std::vector<std::vector<std::string>>& rows, OutputFile& out) {
  std::string text;
  if (format == ExportFormat::csv) {
    std::vector<std::string_view> fields(header.begin(), header.end());
    append_csv_record(text, fields);
    for (const auto& row : rows) {
      fields.assign(row.begin(), row.end());
      append_export_record(text, fields);
    }
  } else {
    JsonWriter j(text);
    j.begin_array();
    for (const auto& row : rows) {
      j.begin_object();
      for (std::size_t i = 0; i < header.size(); ++i)
        if (!row[i].empty()) j.member(header[i], row[i]);
      j.end_object();
    }
    j.end_array();
    text += "\n";
  }
  out.write(text);
}

}  // namespace

std::uint64_t export_transactions(store::Database& db, ExportFormat format, OutputFile& out) {
  std::unordered_map<std::int64_t, std::string> accounts, symbols;
  for (const auto& a : store::list_accounts(db)) accounts[a.id] = a.name;
  for (const auto& s : store::list_securities(db)) symbols[s.id] = s.symbol;
  const auto txns = store::list_transactions(db);
  const auto voided = voided_ids(txns);
  std::unordered_map<std::int64_t, std::int64_t> receiver_of;  // transfer_out id -> account
  for (const auto& t : txns)
    if (t.link_id && !voided.count(t.id)) receiver_of[*t.link_id] = t.account_id;
  auto opt = [](const std::optional<Decimal>& d) { return d ? d->str() : std::string(); };
  std::vector<std::vector<std::string>> rows;
  bool foreign = false;
  for (const auto& t : txns) {
    if (t.kind == TxnKind::void_entry || voided.count(t.id) || t.link_id) continue;
    const auto receiver = receiver_of.find(t.id);
    rows.push_back(
        {t.date.str(), accounts[t.account_id], std::string(to_string(t.kind)),
         t.security_id ? symbols[*t.security_id] : "", opt(t.quantity), opt(t.price), opt(t.amount),
         t.fee.is_zero() ? "" : t.fee.str(), t.ref.value_or(""), t.note.value_or(""),
         receiver != receiver_of.end() ? accounts[receiver->second] : "",
         t.lots.empty() ? "" : format_lot_picks(t.lots), t.acquired ? t.acquired->str() : "",
         t.currency.value_or(""), opt(t.rate), t.to_currency.value_or("")});
    foreign = foreign || t.currency || t.to_currency;
  }
  const std::size_t columns = foreign ? kExportedCurrencyColumns : kExportedColumns;
  for (auto& row : rows) row.resize(columns);
  std::vector<std::string> header;
  for (std::size_t i = 0; i < columns; ++i) header.push_back(transaction_columns()[i].name);
  write_rows(format, header, rows, out);
  return rows.size();
}

std::uint64_t export_accounts(store::Database& db, ExportFormat format, OutputFile& out) {
  std::vector<std::vector<std::string>> rows;
  for (const auto& a : store::list_accounts(db))
    rows.push_back({a.name, a.currency, std::string(to_string(a.basis)),
                    a.allow_negative_cash ? "yes" : "no"});
  write_rows(format, {"name", "currency", "basis", "allow_negative_cash"}, rows, out);
  return rows.size();
}

std::uint64_t export_actions(store::Database& db, ExportFormat format, OutputFile& out) {
  std::unordered_map<std::int64_t, std::string> symbols;
  for (const auto& s : store::list_securities(db)) symbols[s.id] = s.symbol;
  const auto all = store::list_actions(db);
  auto opt = [](const std::optional<Decimal>& d) { return d ? d->str() : std::string(); };
  std::vector<std::vector<std::string>> rows;
  for (const CorporateAction* a : live_actions(all))
    rows.push_back({a->date.str(), symbols[a->security_id], std::string(to_string(a->kind)),
                    a->target_id ? symbols[*a->target_id] : "", opt(a->ratio), opt(a->cash),
                    opt(a->cost_percent), opt(a->in_lieu), a->note.value_or("")});
  write_rows(
      format,
      {"date", "symbol", "action", "into", "ratio", "cash", "cost_percent", "cash_in_lieu", "note"},
      rows, out);
  return rows.size();
}

}  // namespace keel::io
