#include "io/ledger_intake.h"

#include <fmt/format.h>

#include <map>
#include <set>
#include <unordered_map>
#include <unordered_set>

#include "core/error.h"
#include "core/json.h"
#include "core/text.h"
#include "io/csv.h"
#include "io/errors.h"
#include "io/sha256.h"
#include "io/table.h"
#include "ledger/posting.h"
#include "store/ledger_store.h"
#include "store/market_data.h"

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
};

const std::vector<ColumnSpec>& transaction_columns() {
  static const std::vector<ColumnSpec> columns = {
      {"date"},           {"account"},           {"kind"},
      {"symbol", false},  {"quantity", false},   {"price", false},
      {"amount", false},  {"fee", false},        {"ref", false},
      {"note", false},    {"to_account", false}, {"lots", false},
      {"acquired", false}};
  return columns;
}

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
  return sha256_hex(fmt::format("{}\x1f{}\x1f{}\x1f{}\x1f{}\x1f{}\x1f{}", t.date.str(),
                                to_string(t.kind), symbol, opt(t.quantity), opt(t.price),
                                opt(t.amount), t.fee.str()));
}

std::string content_key(const ledger::PostRequest& r) {
  Transaction t;
  t.date = r.date;
  t.kind = r.kind;
  t.quantity = r.quantity;
  t.price = r.price;
  t.amount = r.amount;
  t.fee = r.fee.value_or(Decimal());
  return content_key(t, r.symbol.value_or(""));
}

// Keys of every booked row (voided ones too: a line once booked stays booked).
struct BookedKeys {
  std::set<std::pair<std::int64_t, std::string>> refs;
  std::set<std::pair<std::int64_t, std::string>> contents;

  static BookedKeys load(store::Database& db) {
    std::unordered_map<std::int64_t, std::string> symbols;
    for (const auto& s : store::list_securities(db)) symbols[s.id] = s.symbol;
    BookedKeys keys;
    for (const auto& t : store::list_transactions(db)) {
      if (t.kind == TxnKind::void_entry || t.link_id) continue;
      if (t.ref) keys.refs.emplace(t.account_id, *t.ref);
      keys.contents.emplace(t.account_id,
                            content_key(t, t.security_id ? symbols[*t.security_id] : ""));
    }
    return keys;
  }
};

std::optional<std::string> optional_text(TableReader& t, std::size_t col) {
  if (!t.has(col)) return std::nullopt;
  return std::string(t.raw(col));
}

// Reads one row into a request; false (with errors recorded) if a field is bad.
bool read_request(TableReader& t, ledger::PostRequest& r) {
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
  return ok;
}

// The file read as the mapping says, hashing as it goes (for the import log).
CsvReader open_csv(const std::filesystem::path& file, const Mapping& mapping) {
  CsvOptions csv_options;
  csv_options.delimiter = mapping.delimiter;
  csv_options.hash = true;
  return CsvReader::open(file, csv_options);
}

LedgerImportSummary new_summary(const std::filesystem::path& file, const ImportOptions& options) {
  LedgerImportSummary sum;
  sum.file = file.string();
  sum.dry_run = options.dry_run;
  return sum;
}

void record_run(store::Database& db, std::string_view what, const std::filesystem::path& file,
                LedgerImportSummary& sum) {
  store::ImportRun run;
  run.what = std::string(what);
  run.file_name = file.filename().string();
  run.file_sha256 = sum.sha256;
  run.rows_read = static_cast<std::int64_t>(sum.rows);
  run.rows_added = static_cast<std::int64_t>(sum.added);
  sum.run_id = store::record_import_run(db, run);
}

}  // namespace

LedgerImportSummary import_transactions(store::Database& db, const std::filesystem::path& file,
                                        const ImportOptions& options) {
  const Mapping mapping = checked_mapping(options, "transactions");
  CsvReader csv = open_csv(file, mapping);
  ErrorList errors(file.string());
  LedgerImportSummary sum = new_summary(file, options);

  store::WriteTransaction tx(db);
  const BookedKeys booked = BookedKeys::load(db);
  std::map<std::pair<std::string, std::string>, std::uint64_t> refs_in_file, contents_in_file;
  std::vector<ledger::PostRequest> requests;
  std::vector<std::uint64_t> lines;
  {
    TableReader t(csv, mapping, transaction_columns(), errors);
    while (t.next()) {
      ledger::PostRequest r;
      if (!read_request(t, r)) continue;
      const auto account = store::find_account(db, r.account);
      if (!account) {
        t.error(kAccount, fmt::format("unknown account '{}'", printable(r.account)));
        continue;
      }
      // Exactly once: against the ledger, then within this file.
      const bool has_ref = r.ref.has_value();
      const std::string key = has_ref ? *r.ref : content_key(r);
      auto& seen = has_ref ? refs_in_file : contents_in_file;
      const auto [it, fresh] = seen.emplace(std::make_pair(r.account, key), t.line());
      if (!fresh) {
        t.error(has_ref ? kRef : npos,
                has_ref ? fmt::format("reference '{}' also appears on line {}", printable(key),
                                      it->second)
                        : fmt::format("the same {} also appears on line {}; give each a ref to "
                                      "book both",
                                      to_string(r.kind), it->second));
        continue;
      }
      const auto& booked_keys = has_ref ? booked.refs : booked.contents;
      if (booked_keys.count({account->id, key})) {
        ++sum.already_booked;
        continue;
      }
      if (!has_ref) r.row_hash = key;
      requests.push_back(std::move(r));
      lines.push_back(t.line());
    }
    sum.rows = t.rows();
  }
  sum.sha256 = csv.sha256_hex();
  if (!errors.empty()) errors.raise("nothing was changed");

  std::unordered_map<std::int64_t, std::string> pending;
  for (std::size_t i = 0; i < requests.size(); ++i) {
    try {
      for (auto id : ledger::write_unchecked(db, requests[i]))
        pending[id] = fmt::format("{}:{}", printable(file.string()), lines[i]);
    } catch (const InputError& e) {
      errors.add(lines[i], "", e.what());
      if (errors.full()) break;
    }
  }
  if (!errors.empty()) errors.raise("nothing was changed");
  try {
    ledger::check_ledger(db, pending);
  } catch (const InputError& e) {
    throw ImportRefused(fmt::format("{}: 1 error; nothing was changed", printable(file.string())),
                        {e.what()});
  }
  sum.added = requests.size();
  if (options.dry_run) return sum;  // rolls back
  if (sum.added > 0) record_run(db, "transactions", file, sum);
  tx.commit();
  return sum;
}

LedgerImportSummary import_accounts(store::Database& db, const std::filesystem::path& file,
                                    const ImportOptions& options) {
  const Mapping mapping = checked_mapping(options, "accounts");
  CsvReader csv = open_csv(file, mapping);
  ErrorList errors(file.string());
  LedgerImportSummary sum = new_summary(file, options);
  store::WriteTransaction tx(db);
  {
    TableReader t(csv, mapping,
                  {{"name"}, {"currency"}, {"basis", false}, {"allow_negative_cash", false}},
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
        store::insert_account(db, a);
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

namespace {

void write_rows(ExportFormat format, const std::vector<std::string>& header,
                const std::vector<std::vector<std::string>>& rows, std::FILE* out) {
  std::string text;
  if (format == ExportFormat::csv) {
    std::vector<std::string_view> fields(header.begin(), header.end());
    append_csv_record(text, fields);
    for (const auto& row : rows) {
      fields.assign(row.begin(), row.end());
      append_csv_record(text, fields);
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
  std::fwrite(text.data(), 1, text.size(), out);
}

}  // namespace

std::uint64_t export_transactions(store::Database& db, ExportFormat format, std::FILE* out) {
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
  for (const auto& t : txns) {
    if (t.kind == TxnKind::void_entry || voided.count(t.id) || t.link_id) continue;
    const auto receiver = receiver_of.find(t.id);
    rows.push_back(
        {t.date.str(), accounts[t.account_id], std::string(to_string(t.kind)),
         t.security_id ? symbols[*t.security_id] : "", opt(t.quantity), opt(t.price), opt(t.amount),
         t.fee.is_zero() ? "" : t.fee.str(), t.ref.value_or(""), t.note.value_or(""),
         receiver != receiver_of.end() ? accounts[receiver->second] : "",
         t.lots.empty() ? "" : format_lot_picks(t.lots), t.acquired ? t.acquired->str() : ""});
  }
  std::vector<std::string> header;
  for (const auto& c : transaction_columns()) header.push_back(c.name);
  write_rows(format, header, rows, out);
  return rows.size();
}

std::uint64_t export_accounts(store::Database& db, ExportFormat format, std::FILE* out) {
  std::vector<std::vector<std::string>> rows;
  for (const auto& a : store::list_accounts(db))
    rows.push_back({a.name, a.currency, std::string(to_string(a.basis)),
                    a.allow_negative_cash ? "yes" : "no"});
  write_rows(format, {"name", "currency", "basis", "allow_negative_cash"}, rows, out);
  return rows.size();
}

}  // namespace keel::io
