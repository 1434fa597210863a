#include "store/ledger_store.h"

#include <SQLiteCpp/Statement.h>
#include <fmt/format.h>
#include <sqlite3.h>
#include <sys/mman.h>
#include <unistd.h>

#include <algorithm>
#include <cctype>
#include <chrono>
#include <ctime>

#include "core/error.h"
#include "core/suggest.h"
#include "core/text.h"
#include "store/record_change_store.h"
#include "store/sql_values.h"
#include "store/statement.h"

namespace keel::store {
namespace {

Account read_account(SQLite::Statement& st) {
  Account a;
  a.id = st.getColumn(0).getInt64();
  a.name = st.getColumn(1).getString();
  a.currency = st.getColumn(2).getString();
  a.basis = parse_basis_method(st.getColumn(3).getString());
  a.allow_negative_cash = st.getColumn(4).getInt() != 0;
  return a;
}

Security read_security(SQLite::Statement& st) {
  Security s;
  s.id = st.getColumn(0).getInt64();
  s.symbol = st.getColumn(1).getString();
  s.name = st.getColumn(2).getString();
  s.kind = parse_security_kind(st.getColumn(3).getString());
  s.currency = st.getColumn(4).getString();
  s.lot_size = Decimal::parse(st.getColumn(5).getString());
  s.sector = opt_text(st.getColumn(6));
  s.country = opt_text(st.getColumn(7));
  return s;
}

// A correction's replacement row carries its reference in the correction
// table (the voided row keeps it in txn, where a ref is unique per account).
// Columns 0 to 8 are set on most rows, 9 to 15 (the optional fields) on few,
// and the descriptive texts come last.
constexpr const char* kTxnColumns =
    "id, account_id, date, kind, security_id, quantity, price, amount, fee, acquired, lots, "
    "link_id, voids_id, txn.currency, txn.rate, txn.to_currency, "
    "coalesce(txn.ref, correction.ref), row_hash, note";
constexpr const char* kTxnFrom = "txn LEFT JOIN correction ON correction.new_txn_id = txn.id";
// The same columns from txn alone, its own ref in place of the coalesce.
constexpr const char* kTxnPlainColumns =
    "id, account_id, date, kind, security_id, quantity, price, amount, fee, acquired, lots, "
    "link_id, voids_id, currency, rate, to_currency, ref, row_hash, note";
// The read for the replay: the common columns of every row, then the
// optional fields of the rows that have any, through the partial index
// txn_with_optional_fields (migration 0013), whose condition this is word for
// word. Testing the seven columns on every row instead costs about a third
// of the whole read.
constexpr const char* kTxnCommonColumns =
    "id, account_id, date, kind, security_id, quantity, price, amount, fee";
constexpr const char* kTxnOptionalFields =
    "SELECT id, acquired, lots, link_id, voids_id, currency, rate, to_currency FROM txn "
    "WHERE acquired IS NOT NULL OR lots IS NOT NULL OR link_id IS NOT NULL OR voids_id IS NOT "
    "NULL OR currency IS NOT NULL OR rate IS NOT NULL OR to_currency IS NOT NULL ORDER BY id";

// Read through the raw statement: the ledger's every row passes here on
// each report. Each column is fetched once (Statement::value), and its text
// is parsed in place, without a std::string in between. Each part fills a
// default Transaction in place (a row read into a temporary and moved into
// the vector costs a move and a destruction of some 400 bytes).
std::optional<std::string> text_of(const Statement& st, int c) {
  const auto v = st.value(c);
  if (v.null()) return std::nullopt;
  return std::string(v.text());
}
std::optional<Decimal> decimal_of(const Statement& st, int c) {
  const auto v = st.value(c);
  if (v.null()) return std::nullopt;
  return Decimal::parse(v.text());
}
std::optional<std::int64_t> id_of(const Statement& st, int c) {
  const auto v = st.value(c);
  if (v.null()) return std::nullopt;
  return v.integer();
}

// Columns 0 to 8 of kTxnColumns.
void read_common(const Statement& st, Transaction& t) {
  t.id = st.value(0).integer();
  t.account_id = st.value(1).integer();
  t.date = Date::parse(st.value(2).text());
  const std::string_view kind = st.value(3).text();
  t.kind = kind == "void" ? TxnKind::void_entry : parse_txn_kind(kind);
  t.security_id = id_of(st, 4);
  t.quantity = decimal_of(st, 5);
  t.price = decimal_of(st, 6);
  t.amount = decimal_of(st, 7);
  t.fee = Decimal::parse(st.value(8).text());
}

// The seven optional fields, from column `c` on.
void read_optional(const Statement& st, int c, Transaction& t) {
  if (const auto acquired = st.value(c); !acquired.null())
    t.acquired = Date::parse(acquired.text());
  if (const auto lots = st.value(c + 1); !lots.null() && !lots.text().empty())
    t.lots = parse_lot_picks(lots.text());
  t.link_id = id_of(st, c + 2);
  t.voids_id = id_of(st, c + 3);
  t.currency = text_of(st, c + 4);
  t.rate = decimal_of(st, c + 5);
  t.to_currency = text_of(st, c + 6);
}

// Every column of kTxnColumns.
void read_txn(const Statement& st, Transaction& t) {
  read_common(st, t);
  read_optional(st, 9, t);
  t.ref = text_of(st, 16);
  t.row_hash = text_of(st, 17);
  t.note = text_of(st, 18);
}

// Maps the pages of a block that is about to be written whole in one call,
// instead of taking a page fault for each 4 KiB page as the rows arrive: a
// Transaction is some 600 bytes, so 20,000 rows would fault about 3,000
// times, each costing more than reading a row. Huge pages are asked for
// first, where the kernel gives them on request (transparent huge pages in
// "madvise" mode), so that the block takes a few large pages instead. Advice
// only: a kernel that refuses either (MADV_POPULATE_WRITE needs Linux 5.14)
// leaves the pages to come one fault at a time, as before.
void populate(const void* data, std::size_t bytes) {
  const auto page = static_cast<std::uintptr_t>(sysconf(_SC_PAGESIZE));
  if (page == 0 || (page & (page - 1)) != 0) return;
  const auto start = reinterpret_cast<std::uintptr_t>(data);
  const std::uintptr_t first = (start + page - 1) & ~(page - 1);
  const std::uintptr_t end = (start + bytes) & ~(page - 1);
  if (end <= first) return;
  void* const block = reinterpret_cast<void*>(first);
  madvise(block, end - first, MADV_HUGEPAGE);
  madvise(block, end - first, MADV_POPULATE_WRITE);
}

bool is_unique_violation(const SQLite::Exception& e) {
  return e.getExtendedErrorCode() == SQLITE_CONSTRAINT_UNIQUE ||
         e.getExtendedErrorCode() == SQLITE_CONSTRAINT_PRIMARYKEY;
}

}  // namespace

std::optional<std::string> nearest_names(std::string_view name,
                                         const std::vector<std::string>& known) {
  for (const auto& k : known)
    if (k.size() == name.size() && std::equal(k.begin(), k.end(), name.begin(), [](char a, char b) {
          return std::tolower(static_cast<unsigned char>(a)) ==
                 std::tolower(static_cast<unsigned char>(b));
        }))
      return fmt::format("did you mean '{}'? (it differs in letter case only)", printable(k));
  const auto close = closest(name, known);
  if (close.empty()) return std::nullopt;
  std::string list;
  for (std::size_t i = 0; i < close.size(); ++i)
    list += fmt::format("{}'{}'",
                        i == 0                  ? ""
                        : i + 1 == close.size() ? " or "
                                                : ", ",
                        printable(close[i]));
  return fmt::format("did you mean {}?", list);
}

std::string utc_timestamp() {
  const std::time_t now = std::time(nullptr);
  std::tm utc{};
  gmtime_r(&now, &utc);
  return fmt::format("{:04}-{:02}-{:02}T{:02}:{:02}:{:02}Z", utc.tm_year + 1900, utc.tm_mon + 1,
                     utc.tm_mday, utc.tm_hour, utc.tm_min, utc.tm_sec);
}

std::optional<std::string> ledger_currency(Database& db) {
  SQLite::Statement st(db.sql(), "SELECT currency FROM ledger_setting WHERE id = 1");
  if (!st.executeStep()) return std::nullopt;
  return opt_text(st.getColumn(0));
}

void set_ledger_currency(Database& db, const std::string& currency) {
  if (const auto now = ledger_currency(db)) {
    if (*now == currency) return;
    throw InputError(fmt::format(
        "the ledger's currency is {}; it is set once and never changed (keel does not convert "
        "amounts already booked)",
        *now));
  }
  SQLite::Statement st(db.sql(), "UPDATE ledger_setting SET currency = ? WHERE id = 1");
  st.bind(1, currency);
  st.exec();
}

std::int64_t insert_account(Database& db, const Account& a) {
  check_identifier("account name", a.name, 200);
  normalize_currency(a.currency);  // refuses anything but three letters
  SQLite::Statement st(db.sql(),
                       "INSERT INTO account (name, currency, basis_method, allow_negative_cash, "
                       "created_at) VALUES (?, ?, ?, ?, ?)");
  st.bind(1, a.name);
  st.bind(2, a.currency);
  st.bind(3, std::string(to_string(a.basis)));
  st.bind(4, a.allow_negative_cash ? 1 : 0);
  st.bind(5, utc_timestamp());
  try {
    st.exec();
  } catch (const SQLite::Exception& e) {
    if (is_unique_violation(e))
      throw InputError(fmt::format("an account named '{}' already exists", printable(a.name)));
    throw;
  }
  return db.sql().getLastInsertRowid();
}

std::optional<Account> find_account(Database& db, std::string_view name) {
  SQLite::Statement st(db.sql(),
                       "SELECT id, name, currency, basis_method, allow_negative_cash FROM account "
                       "WHERE name = ?");
  st.bind(1, std::string(name));
  if (!st.executeStep()) return std::nullopt;
  return read_account(st);
}

std::vector<Account> list_accounts(Database& db) {
  SQLite::Statement st(db.sql(),
                       "SELECT id, name, currency, basis_method, allow_negative_cash FROM account "
                       "ORDER BY name");
  std::vector<Account> out;
  while (st.executeStep()) out.push_back(read_account(st));
  return out;
}

Account account_named(Database& db, std::string_view name) {
  if (auto a = find_account(db, name)) return *a;
  std::string known;
  std::vector<std::string> names;
  for (const auto& a : list_accounts(db)) {
    known += (known.empty() ? "" : ", ") + a.name;
    names.push_back(a.name);
  }
  if (const auto hint = nearest_names(name, names))
    throw InputError(fmt::format("unknown account '{}'; {}", printable(name), *hint));
  throw InputError(fmt::format("unknown account '{}'{}", printable(name),
                               known.empty() ? "; add one with 'keel account add NAME'"
                                             : "; known accounts: " + printable(known)));
}

void insert_tax_status(Database& db, const TaxStatusChange& c) {
  SQLite::Statement st(db.sql(),
                       "INSERT INTO account_tax_status (account_id, from_day, status, recorded_at) "
                       "VALUES (?, ?, ?, ?)");
  st.bind(1, c.account_id);
  st.bind(2, c.from.str());
  st.bind(3, std::string(to_string(c.status)));
  st.bind(4, utc_timestamp());
  try {
    st.exec();
  } catch (const SQLite::Exception& e) {
    if (is_unique_violation(e))
      throw InputError(fmt::format(
          "the account already has a tax status from {}; give another --from day", c.from.str()));
    throw;
  }
}

std::vector<TaxStatusChange> list_tax_statuses(Database& db) {
  SQLite::Statement st(db.sql(),
                       "SELECT account_id, from_day, status FROM account_tax_status "
                       "ORDER BY account_id, from_day");
  std::vector<TaxStatusChange> out;
  while (st.executeStep())
    out.push_back({st.getColumn(0).getInt64(), Date::parse(st.getColumn(1).getString()),
                   parse_tax_status(st.getColumn(2).getString())});
  return out;
}

std::int64_t insert_security(Database& db, const Security& s) {
  validate(s);
  SQLite::Statement st(db.sql(),
                       "INSERT INTO security (symbol, name, kind, currency, lot_size, sector, "
                       "country) VALUES (?, ?, ?, ?, ?, ?, ?)");
  st.bind(1, s.symbol);
  st.bind(2, s.name);
  st.bind(3, std::string(to_string(s.kind)));
  st.bind(4, s.currency);
  st.bind(5, s.lot_size.str());
  bind_optional(st, 6, s.sector);
  bind_optional(st, 7, s.country);
  try {
    st.exec();
  } catch (const SQLite::Exception& e) {
    if (is_unique_violation(e))
      throw InputError(
          fmt::format("a security with symbol '{}' already exists", printable(s.symbol)));
    throw;
  }
  return db.sql().getLastInsertRowid();
}

std::optional<Security> find_security(Database& db, std::string_view symbol) {
  SQLite::Statement st(
      db.sql(),
      "SELECT id, symbol, name, kind, currency, lot_size, sector, country FROM security "
      "WHERE symbol = ?");
  st.bind(1, std::string(symbol));
  if (!st.executeStep()) return std::nullopt;
  return read_security(st);
}

Security security_with_symbol(Database& db, std::string_view symbol) {
  if (auto s = find_security(db, symbol)) return *s;
  // A symbol the security had before a change still names it.
  if (auto s = find_security_by_former_symbol(db, std::string(symbol))) return *s;
  std::vector<std::string> symbols;
  for (const auto& s : list_securities(db)) symbols.push_back(s.symbol);
  const auto hint = nearest_names(symbol, symbols);
  // A symbol that differs only in letter case is surely the one meant: no
  // invitation to add a near-duplicate.
  if (hint && hint->find("letter case") != std::string::npos)
    throw InputError(fmt::format("unknown security '{}'; {}", printable(symbol), *hint));
  if (hint)
    throw InputError(
        fmt::format("unknown security '{}'; {} To add a new one: 'keel security "
                    "add {}'",
                    printable(symbol), *hint, printable(symbol)));
  throw InputError(fmt::format("unknown security '{}'; add it with 'keel security add {}'",
                               printable(symbol), printable(symbol)));
}

std::vector<Security> list_securities(Database& db) {
  // Through the raw statement: a ledger of thousands of names is listed at
  // every proposal, and each column is read without a copy in between.
  Statement st(db.sql().getHandle(),
               "SELECT id, symbol, name, kind, currency, lot_size, sector, country FROM security "
               "ORDER BY symbol");
  std::vector<Security> out;
  while (st.next()) {
    Security& s = out.emplace_back();
    s.id = st.integer(0);
    s.symbol = st.text(1);
    s.name = st.text(2);
    s.kind = parse_security_kind(st.text(3));
    s.currency = st.text(4);
    s.lot_size = Decimal::parse(st.text(5));
    if (!st.null(6)) s.sector = std::string(st.text(6));
    if (!st.null(7)) s.country = std::string(st.text(7));
  }
  return out;
}

std::int64_t insert_transaction(Database& db, const Transaction& t) {
  SQLite::Statement st(db.sql(),
                       "INSERT INTO txn (account_id, date, kind, security_id, quantity, price, "
                       "amount, fee, acquired, lots, link_id, voids_id, ref, row_hash, note, "
                       "recorded_at, currency, rate, to_currency) VALUES (?, ?, ?, ?, ?, ?, ?, ?, "
                       "?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)");
  st.bind(1, t.account_id);
  st.bind(2, t.date.str());
  st.bind(3, std::string(to_string(t.kind)));
  bind_optional(st, 4, t.security_id);
  bind_decimal(st, 5, t.quantity);
  bind_decimal(st, 6, t.price);
  bind_decimal(st, 7, t.amount);
  st.bind(8, t.fee.str());
  if (t.acquired)
    st.bind(9, t.acquired->str());
  else
    st.bind(9);
  if (t.lots.empty())
    st.bind(10);
  else
    st.bind(10, format_lot_picks(t.lots));
  bind_optional(st, 11, t.link_id);
  bind_optional(st, 12, t.voids_id);
  bind_optional(st, 13, t.ref);
  bind_optional(st, 14, t.row_hash);
  bind_optional(st, 15, t.note);
  st.bind(16, utc_timestamp());
  bind_optional(st, 17, t.currency);
  bind_decimal(st, 18, t.rate);
  bind_optional(st, 19, t.to_currency);
  try {
    st.exec();
  } catch (const SQLite::Exception& e) {
    if (is_unique_violation(e) && t.ref)
      throw InputError(
          fmt::format("reference '{}' is already booked in this account", printable(*t.ref)));
    if (is_unique_violation(e) && t.voids_id)
      throw InputError(fmt::format("transaction {} is already void", *t.voids_id));
    if (is_unique_violation(e))
      throw InputError("the same transaction line is already booked in this account");
    throw;
  }
  return db.sql().getLastInsertRowid();
}

std::optional<Transaction> find_transaction(Database& db, std::int64_t id) {
  Statement st(db.sql().getHandle(),
               fmt::format("SELECT {} FROM {} WHERE id = ?", kTxnColumns, kTxnFrom).c_str());
  st.bind(1, id);
  if (!st.next()) return std::nullopt;
  Transaction t;
  read_txn(st, t);
  st.reset();
  return t;
}

std::vector<Transaction> list_transactions(Database& db, TxnFields fields) {
  // Its several statements read one state of the ledger.
  const ReadTransaction snapshot(db);
  std::vector<Transaction> out;
  // Reserved up front: a Transaction is large, and growing the vector by
  // doubling would move every row read so far, again and again.
  Statement count(db.sql().getHandle(), "SELECT count(*) FROM txn");
  if (count.next()) out.reserve(static_cast<std::size_t>(count.integer(0)));
  count.reset();
  populate(out.data(), out.capacity() * sizeof(Transaction));
  // The few corrections first, so that the rows can be read in one pass over
  // the table in id order: walking the (date, id) index instead costs a
  // lookup of the table row, and one in correction, for every row.
  std::vector<std::pair<std::int64_t, std::string>> corrections;
  if (fields == TxnFields::all) {
    Statement refs(db.sql().getHandle(),
                   "SELECT new_txn_id, ref FROM correction ORDER BY new_txn_id");
    while (refs.next()) corrections.emplace_back(refs.integer(0), std::string(refs.text(1)));
    Statement st(db.sql().getHandle(),
                 fmt::format("SELECT {} FROM txn ORDER BY id", kTxnPlainColumns).c_str());
    while (st.next()) read_txn(st, out.emplace_back());
  } else {
    Statement st(db.sql().getHandle(),
                 fmt::format("SELECT {} FROM txn ORDER BY id", kTxnCommonColumns).c_str());
    while (st.next()) read_common(st, out.emplace_back());
    // Both in id order: the optional fields are merged in with one cursor.
    Statement optional(db.sql().getHandle(), kTxnOptionalFields);
    auto row = out.begin();
    while (optional.next()) {
      const std::int64_t id = optional.integer(0);
      while (row != out.end() && row->id < id) ++row;
      if (row != out.end() && row->id == id) read_optional(optional, 1, *row);
    }
  }
  auto correction = corrections.begin();
  for (auto& t : out) {
    while (correction != corrections.end() && correction->first < t.id) ++correction;
    if (correction != corrections.end() && correction->first == t.id && !t.ref)
      t.ref = correction->second;
  }
  // Posting order is (date, id). Rows are mostly posted in date order, so
  // the check alone usually settles it.
  const auto by_date_then_id = [](const Transaction& a, const Transaction& b) {
    return a.date != b.date ? a.date < b.date : a.id < b.id;
  };
  if (!std::is_sorted(out.begin(), out.end(), by_date_then_id)) {
    std::vector<std::size_t> order(out.size());
    for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
    std::sort(order.begin(), order.end(),
              [&](std::size_t a, std::size_t b) { return by_date_then_id(out[a], out[b]); });
    std::vector<Transaction> sorted;
    sorted.reserve(out.size());
    for (const auto i : order) sorted.push_back(std::move(out[i]));
    out = std::move(sorted);
  }
  return out;
}

bool optional_fields_indexed(Database& db) {
  Statement plan(db.sql().getHandle(),
                 fmt::format("EXPLAIN QUERY PLAN {}", kTxnOptionalFields).c_str());
  bool indexed = false;
  while (plan.next())
    if (plan.text(3).find("USING INDEX txn_with_optional_fields") != std::string_view::npos)
      indexed = true;
  return indexed;
}

// Looked up once per imported row: both halves go through an index
// (txn (account_id, ref); correction (ref)), never a scan of the account.
bool ref_exists(Database& db, std::int64_t account_id, std::string_view ref) {
  SQLite::Statement st(db.sql(),
                       "SELECT 1 FROM txn WHERE account_id = ?1 AND ref = ?2 UNION ALL "
                       "SELECT 1 FROM correction c WHERE c.ref = ?2 AND EXISTS (SELECT 1 FROM "
                       "txn WHERE txn.id = c.new_txn_id AND txn.account_id = ?1)");
  st.bind(1, account_id);
  st.bind(2, std::string(ref));
  return st.executeStep();
}

bool row_hash_exists(Database& db, std::int64_t account_id, std::string_view row_hash) {
  SQLite::Statement st(db.sql(), "SELECT 1 FROM txn WHERE account_id = ? AND row_hash = ?");
  st.bind(1, account_id);
  st.bind(2, std::string(row_hash));
  return st.executeStep();
}

std::optional<std::int64_t> void_of(Database& db, std::int64_t txn_id) {
  SQLite::Statement st(db.sql(), "SELECT id FROM txn WHERE voids_id = ?");
  st.bind(1, txn_id);
  if (!st.executeStep()) return std::nullopt;
  return st.getColumn(0).getInt64();
}

std::int64_t last_transaction_id(Database& db) {
  SQLite::Statement st(db.sql(), "SELECT coalesce(max(id), 0) FROM txn");
  st.executeStep();
  return st.getColumn(0).getInt64();
}

std::int64_t insert_split(Database& db, const Split& s) {
  SQLite::Statement st(db.sql(),
                       "INSERT INTO split (security_id, date, ratio, recorded_at) "
                       "VALUES (?, ?, ?, ?)");
  st.bind(1, s.security_id);
  st.bind(2, s.date.str());
  st.bind(3, s.ratio.str());
  st.bind(4, utc_timestamp());
  try {
    st.exec();
  } catch (const SQLite::Exception& e) {
    if (is_unique_violation(e))
      throw InputError(
          fmt::format("a split on {} is already recorded for this security", s.date.str()));
    throw;
  }
  return db.sql().getLastInsertRowid();
}

std::vector<Split> list_splits(Database& db) {
  SQLite::Statement st(db.sql(),
                       "SELECT id, security_id, date, ratio FROM split ORDER BY date, id");
  std::vector<Split> out;
  while (st.executeStep()) {
    Split s;
    s.id = st.getColumn(0).getInt64();
    s.security_id = st.getColumn(1).getInt64();
    s.date = Date::parse(st.getColumn(2).getString());
    s.ratio = Decimal::parse(st.getColumn(3).getString());
    out.push_back(s);
  }
  return out;
}

}  // namespace keel::store
