#include "store/market_data.h"

#include <SQLiteCpp/Statement.h>
#include <fmt/format.h>
#include <sqlite3.h>

#include <algorithm>
#include <array>

#include "core/error.h"
#include "core/text.h"
#include "store/ledger_store.h"
#include "store/price_buffer.h"
#include "store/sqlite_error.h"
#include "store/statement.h"

namespace keel::store {
namespace {

enum Kind { kPrice = 0, kMetric = 1, kDistribution = 2, kSplit = 3, kKinds = 4 };

struct Range {
  bool known = false;
  bool any = false;
  std::string min, max;
  bool covers(std::string_view d) const { return any && d >= min && d <= max; }
};

std::string describe(const Security& s) {
  return fmt::format("{},{},{},{}{}", s.name, to_string(s.kind), s.currency, s.lot_size.str(),
                     s.sector ? "," + *s.sector : std::string());
}

// Page caches (KiB when negative). SQLite's default is 2 MiB.
constexpr const char* kBulkCache = "PRAGMA cache_size = -65536";
constexpr const char* kPriceCache = "PRAGMA cache_size = -8192";

}  // namespace

// ---------------------------------------------------------------- writing

struct MarketWriter::Impl {
  Database& db;
  sqlite3* h;
  bool replace;
  std::unordered_map<std::string, std::size_t> by_symbol;
  std::vector<std::int64_t> ids;
  std::vector<std::array<Range, kKinds>> ranges;
  std::string key;                // reused lookup key
  std::size_t last_security = 0;  // the handle security() gave last
  std::vector<std::string> securities_seen;
  std::vector<std::string> symbols;

  // Buffered prices, see MarketWriter::price().
  std::size_t buffer_bytes = 0;  // write the buffered prices when they hold this much
  static constexpr std::size_t kBlock = 256;
  PriceBuffer prices{0};
  PriceProblem problem;
  Counts counts;
  std::string existing;

  Statement range[kKinds];
  Statement seen_insert;
  Statement price_insert, price_block, price_get, price_set;
  Statement metric_insert, metric_get, metric_set;
  Statement dist_insert, dist_get, dist_set;
  Statement split_insert, split_get;
  Statement pack_drop;
  std::vector<char> pack_dropped;  // per security: its pack is gone in this transaction

  Impl(Database& d, bool r, std::size_t buffer)
      : db(d),
        h(d.sql().getHandle()),
        replace(r),
        // min() and max() apart: SQLite reads just one end of the key for a
        // lone min() or max(), but every row of the security for both at once.
        range{{h,
               "SELECT (SELECT min(date) FROM price WHERE security_id = ?1), "
               "(SELECT max(date) FROM price WHERE security_id = ?1)"},
              {h, "SELECT min(date), max(date) FROM metric WHERE security_id = ?"},
              {h, "SELECT min(ex_date), max(ex_date) FROM distribution WHERE security_id = ?"},
              {h, "SELECT min(date), max(date) FROM split WHERE security_id = ?"}},
        seen_insert(h, make_seen_table(h)),
        price_insert(h,
                     "INSERT INTO price (security_id, date, close) VALUES (?, ?, ?) "
                     "ON CONFLICT DO NOTHING"),
        price_block(h, block_insert_sql(kBlock).c_str()),
        price_get(h, "SELECT close FROM price WHERE security_id = ? AND date = ?"),
        price_set(h, "UPDATE price SET close = ? WHERE security_id = ? AND date = ?"),
        metric_insert(h,
                      "INSERT INTO metric (security_id, name, date, known_on, value) "
                      "VALUES (?, ?, ?, ?, ?) ON CONFLICT DO NOTHING"),
        metric_get(h,
                   "SELECT value FROM metric WHERE security_id = ? AND name = ? AND date = ? "
                   "AND known_on = ?"),
        metric_set(h,
                   "UPDATE metric SET value = ? WHERE security_id = ? AND name = ? AND date = ? "
                   "AND known_on = ?"),
        dist_insert(h,
                    "INSERT INTO distribution (security_id, ex_date, pay_date, per_share) "
                    "VALUES (?, ?, ?, ?) ON CONFLICT DO NOTHING"),
        dist_get(h,
                 "SELECT pay_date, per_share FROM distribution WHERE security_id = ? "
                 "AND ex_date = ?"),
        dist_set(h,
                 "UPDATE distribution SET pay_date = ?, per_share = ? WHERE security_id = ? "
                 "AND ex_date = ?"),
        split_insert(h,
                     "INSERT INTO split (security_id, date, ratio, recorded_at) "
                     "VALUES (?, ?, ?, ?) ON CONFLICT DO NOTHING"),
        split_get(h, "SELECT ratio FROM split WHERE security_id = ? AND date = ?"),
        pack_drop(h, "DELETE FROM close_pack WHERE security_id = ? AND last_day >= ?") {
    // Larger page cache for bulk work written in file order (metrics and
    // the like); prices set their own, see CacheForPrices.
    sqlite3_exec(h, kBulkCache, nullptr, nullptr, nullptr);
    SQLite::Statement st(db.sql(), "SELECT id, symbol FROM security ORDER BY id");
    while (st.executeStep()) {
      by_symbol.emplace(st.getColumn(1).getString(), ids.size());
      symbols.push_back(st.getColumn(1).getString());
      ids.push_back(st.getColumn(0).getInt64());
    }
    ranges.resize(ids.size());
    pack_dropped.assign(ids.size(), 0);
    prices = PriceBuffer(ids.size());
    buffer_bytes = buffer;
  }

  static std::string block_insert_sql(std::size_t rows) {
    std::string sql = "INSERT INTO price (security_id, date, close) VALUES (?, ?, ?)";
    for (std::size_t i = 1; i < rows; ++i) sql += ", (?, ?, ?)";
    return sql;
  }

  static const char* make_seen_table(sqlite3* h) {
    // Keys of this import that fall where the ledger already had rows: only
    // there can a repeated key be either a re-import or a duplicate line.
    if (const int rc = sqlite3_exec(h,
                                    "CREATE TEMP TABLE IF NOT EXISTS intake_seen (kind INTEGER, "
                                    "security_id INTEGER, k TEXT, PRIMARY KEY (kind, security_id, "
                                    "k)) WITHOUT ROWID; DELETE FROM temp.intake_seen",
                                    nullptr, nullptr, nullptr);
        rc != SQLITE_OK)
      throw_sqlite_error(h, rc);
    return "INSERT INTO temp.intake_seen (kind, security_id, k) VALUES (?, ?, ?) "
           "ON CONFLICT DO NOTHING";
  }

  Range& range_of(Kind kind, std::size_t sec) {
    Range& r = ranges[sec][kind];
    if (!r.known) {
      r.known = true;
      Statement& q = range[kind];
      q.bind(1, ids[sec]);
      if (q.next()) {
        r.any = !q.null(0);
        if (r.any) {
          r.min = q.text(0);
          r.max = q.text(1);
        }
        q.reset();
      }
    }
    return r;
  }

  void flush_prices();
  Upsert upsert_price(std::size_t sec, std::string_view date, std::string_view close);

  // True when the key is new to this import (or cannot have been seen before
  // by the range rule); false for a duplicate within the import.
  // `overlap` says whether the ledger may already hold the key.
  bool first_time(Kind kind, std::size_t sec, std::string_view date, std::string_view k,
                  bool& overlap) {
    overlap = range_of(kind, sec).covers(date);
    if (!overlap) return true;
    return seen_insert.bind(1, std::int64_t{kind}).bind(2, ids[sec]).bind(3, k).run() == 1;
  }
};

ForeignKeyPause::ForeignKeyPause(Database& db) : db_(db) {
  db_.sql().exec("PRAGMA foreign_keys = OFF");
}

ForeignKeyPause::~ForeignKeyPause() {
  try {
    db_.sql().exec("PRAGMA foreign_keys = ON");
  } catch (...) {
    // Never throw from a destructor; the next open turns checks on again.
  }
}

MarketWriter::MarketWriter(Database& db, bool replace, std::size_t price_buffer_bytes)
    : impl_(std::make_unique<Impl>(db, replace, price_buffer_bytes)) {}

MarketWriter::~MarketWriter() {
  if (impl_) sqlite3_exec(impl_->h, "DELETE FROM temp.intake_seen", nullptr, nullptr, nullptr);
}

std::size_t MarketWriter::security(std::string_view symbol) {
  auto& m = *impl_;
  // Files list one security's rows together, or every security each day in
  // the same order: the last row's security, or the one after it, is
  // usually this one.
  for (const std::size_t guess : {m.last_security, m.last_security + 1})
    if (guess < m.symbols.size() && m.symbols[guess] == symbol) return m.last_security = guess;
  m.key.assign(symbol);
  const auto it = m.by_symbol.find(m.key);
  if (it == m.by_symbol.end()) return kUnknown;
  return m.last_security = it->second;
}

void MarketWriter::on_price_problem(PriceProblem fn) {
  impl_->problem = std::move(fn);
}

const std::string& MarketWriter::symbol(std::size_t sec) const {
  return impl_->symbols[sec];
}

void MarketWriter::price(std::size_t sec, std::string_view date, std::string_view close,
                         std::uint64_t line) {
  auto& m = *impl_;
  m.prices.add(sec, date, close, line);
  if (m.prices.bytes() >= m.buffer_bytes) m.flush_prices();
}

MarketWriter::Counts MarketWriter::finish_prices() {
  impl_->flush_prices();
  return impl_->counts;
}

namespace {

// Statements prepared while it lives run without triggers. The only triggers
// on price drop close packs (migration 0012), once per row: for a bulk load,
// a fifth of its time. flush_prices() drops the packs they would drop itself,
// in the same transaction, and turns them back on after.
// Turning triggers off or on makes SQLite prepare each statement again.
class TriggersOff {
 public:
  explicit TriggersOff(sqlite3* h) : h_(h) { set(0); }
  ~TriggersOff() { set(1); }
  TriggersOff(const TriggersOff&) = delete;
  TriggersOff& operator=(const TriggersOff&) = delete;

 private:
  void set(int on) {
    if (const int rc = sqlite3_db_config(h_, SQLITE_DBCONFIG_ENABLE_TRIGGER, on, nullptr);
        rc != SQLITE_OK && on == 0)
      throw_sqlite_error(h_, rc);
  }
  sqlite3* h_;
};

// Prices go in key order, so the table changes at one place at a time and
// a small page cache serves them as well as a large one; the writer's bulk
// cache would only fill with pages waiting for the commit. Set while it
// lives, the bulk cache again after.
class CacheForPrices {
 public:
  explicit CacheForPrices(sqlite3* h) : h_(h) {
    sqlite3_exec(h_, kPriceCache, nullptr, nullptr, nullptr);
  }
  ~CacheForPrices() { sqlite3_exec(h_, kBulkCache, nullptr, nullptr, nullptr); }
  CacheForPrices(const CacheForPrices&) = delete;
  CacheForPrices& operator=(const CacheForPrices&) = delete;

 private:
  sqlite3* h_;
};

}  // namespace

void MarketWriter::Impl::flush_prices() {
  if (prices.empty()) return;
  // What the triggers of migration 0012 do, once per security: a pack whose
  // last day is on or after the earliest day written goes; one that ends
  // before every day written keeps them as its tail.
  BufferedPrice first;
  for (std::size_t sec = 0; sec < ids.size(); ++sec)
    if (prices.rows(sec) > 0 && !pack_dropped[sec] && prices.read(sec).next(first) &&
        pack_drop.bind(1, ids[sec]).bind(2, first.day()).run() > 0)
      pack_dropped[sec] = 1;
  const TriggersOff off(h);
  const CacheForPrices cache(h);
  auto one = [&](std::size_t sec, const BufferedPrice& p) {
    const Upsert u = upsert_price(sec, p.day(), p.close());
    if (u == Upsert::added)
      ++counts.added;
    else if (u == Upsert::unchanged)
      ++counts.unchanged;
    else if (u == Upsert::replaced)
      ++counts.replaced;
    else if (problem)
      problem(p.line, u, sec, p.day(), existing);
  };
  // Rows outside the ledger's existing range for their security cannot meet
  // a stored row; they go in blocks of kBlock through one multi-row INSERT.
  // A plain INSERT that hits a key undoes the whole statement, and then the
  // block is redone row by row to find the duplicate.
  std::size_t block_rows = 0;
  std::array<BufferedPrice, kBlock> block;
  std::array<std::size_t, kBlock> block_sec;
  auto run_block = [&] {
    if (block_rows == kBlock) {
      for (std::size_t i = 0; i < kBlock; ++i) {
        const int at = static_cast<int>(3 * i);
        price_block.bind(at + 1, ids[block_sec[i]]);
        price_block.bind(at + 2, block[i].day());
        price_block.bind_terminated(at + 3, block[i].close_text());
      }
      if (price_block.try_run()) {
        counts.added += kBlock;
        block_rows = 0;
        return;
      }
    }
    for (std::size_t i = 0; i < block_rows; ++i) one(block_sec[i], block[i]);
    block_rows = 0;
  };
  // In key order, security by security (handles are in id order), so that
  // where the ledger holds nothing later the table only grows at its end.
  BufferedPrice p;
  for (std::size_t sec = 0; sec < ids.size(); ++sec) {
    if (prices.rows(sec) == 0) continue;
    auto rows = prices.read(sec);
    bool first = true;
    std::uint32_t prev = 0;
    while (rows.next(p)) {
      const bool repeat = !first && p.ymd == prev;
      first = false;
      prev = p.ymd;
      if (repeat || range_of(kPrice, sec).covers(p.day())) {
        run_block();
        one(sec, p);  // a repeat conflicts with its predecessor
        continue;
      }
      block[block_rows] = p;
      block_sec[block_rows++] = sec;
      if (block_rows == kBlock) run_block();
    }
  }
  run_block();
  prices.clear();
}

Upsert MarketWriter::Impl::upsert_price(std::size_t sec, std::string_view date,
                                        std::string_view close) {
  bool overlap = false;
  if (!first_time(kPrice, sec, date, date, overlap)) return Upsert::duplicate;
  const std::int64_t id = ids[sec];
  if (price_insert.bind(1, id).bind(2, date).bind(3, close).run() == 1) return Upsert::added;
  if (!overlap) return Upsert::duplicate;
  price_get.bind(1, id).bind(2, date);
  price_get.next();
  existing.assign(price_get.text(0));
  price_get.reset();
  if (existing == close) return Upsert::unchanged;
  if (!replace) return Upsert::conflict;
  price_set.bind(1, close).bind(2, id).bind(3, date).run();
  return Upsert::replaced;
}

Upsert MarketWriter::metric(std::size_t sec, std::string_view name, std::string_view date,
                            std::string_view known_on, std::string_view value,
                            std::string& existing) {
  auto& m = *impl_;
  m.key.assign(name).append("\x1f").append(date).append("\x1f").append(known_on);
  bool overlap = false;
  if (!m.first_time(kMetric, sec, date, m.key, overlap)) return Upsert::duplicate;
  const std::int64_t id = m.ids[sec];
  if (m.metric_insert.bind(1, id)
          .bind(2, name)
          .bind(3, date)
          .bind(4, known_on)
          .bind(5, value)
          .run() == 1)
    return Upsert::added;
  if (!overlap) return Upsert::duplicate;
  m.metric_get.bind(1, id).bind(2, name).bind(3, date).bind(4, known_on);
  m.metric_get.next();
  existing.assign(m.metric_get.text(0));
  m.metric_get.reset();
  if (existing == value) return Upsert::unchanged;
  if (!m.replace) return Upsert::conflict;
  m.metric_set.bind(1, value).bind(2, id).bind(3, name).bind(4, date).bind(5, known_on).run();
  return Upsert::replaced;
}

Upsert MarketWriter::distribution(std::size_t sec, std::string_view ex_date,
                                  std::string_view pay_date, std::string_view per_share,
                                  std::string& existing) {
  auto& m = *impl_;
  bool overlap = false;
  if (!m.first_time(kDistribution, sec, ex_date, ex_date, overlap)) return Upsert::duplicate;
  const std::int64_t id = m.ids[sec];
  if (m.dist_insert.bind(1, id).bind(2, ex_date).bind(3, pay_date).bind(4, per_share).run() == 1)
    return Upsert::added;
  if (!overlap) return Upsert::duplicate;
  m.dist_get.bind(1, id).bind(2, ex_date);
  m.dist_get.next();
  const std::string old_pay(m.dist_get.text(0));
  const std::string old_per(m.dist_get.text(1));
  m.dist_get.reset();
  if (old_pay == pay_date && old_per == per_share) return Upsert::unchanged;
  existing = fmt::format("pay date {}, {} per share", old_pay, old_per);
  if (!m.replace) return Upsert::conflict;
  m.dist_set.bind(1, pay_date).bind(2, per_share).bind(3, id).bind(4, ex_date).run();
  return Upsert::replaced;
}

Upsert MarketWriter::split(std::size_t sec, std::string_view date, std::string_view ratio,
                           std::string& existing) {
  auto& m = *impl_;
  bool overlap = false;
  if (!m.first_time(kSplit, sec, date, date, overlap)) return Upsert::duplicate;
  const std::int64_t id = m.ids[sec];
  const std::string now = utc_timestamp();
  if (m.split_insert.bind(1, id).bind(2, date).bind(3, ratio).bind(4, now).run() == 1)
    return Upsert::added;
  if (!overlap) return Upsert::duplicate;
  m.split_get.bind(1, id).bind(2, date);
  m.split_get.next();
  existing.assign(m.split_get.text(0));
  m.split_get.reset();
  return existing == ratio ? Upsert::unchanged : Upsert::conflict;
}

Upsert MarketWriter::security_row(const Security& s, std::string& existing) {
  auto& m = *impl_;
  if (std::find(m.securities_seen.begin(), m.securities_seen.end(), s.symbol) !=
      m.securities_seen.end())
    return Upsert::duplicate;
  m.securities_seen.push_back(s.symbol);
  const auto old = find_security(m.db, s.symbol);
  if (!old) {
    const std::int64_t id = insert_security(m.db, s);
    m.by_symbol.emplace(s.symbol, m.ids.size());
    m.symbols.push_back(s.symbol);
    m.ids.push_back(id);
    m.ranges.emplace_back();
    m.pack_dropped.push_back(0);
    m.prices.add_security();
    return Upsert::added;
  }
  if (describe(*old) == describe(s)) return Upsert::unchanged;
  existing = describe(*old);
  if (!m.replace) return Upsert::conflict;
  validate(s);
  SQLite::Statement st(m.db.sql(),
                       "UPDATE security SET name = ?, kind = ?, currency = ?, lot_size = ?, "
                       "sector = ? WHERE id = ?");
  st.bind(1, s.name);
  st.bind(2, std::string(to_string(s.kind)));
  st.bind(3, s.currency);
  st.bind(4, s.lot_size.str());
  if (s.sector)
    st.bind(5, *s.sector);
  else
    st.bind(5);
  st.bind(6, old->id);
  st.exec();
  return Upsert::replaced;
}

// ---------------------------------------------------------------- reading

void for_each_price(
    Database& db,
    const std::function<void(const std::string&, std::string_view, std::string_view)>& fn) {
  sqlite3* h = db.sql().getHandle();
  Statement q(h, "SELECT date, close FROM price WHERE security_id = ? ORDER BY date");
  for (const Security& s : list_securities(db)) {
    q.bind(1, s.id);
    while (q.next()) fn(s.symbol, q.text(0), q.text(1));
  }
}

void for_each_metric(Database& db,
                     const std::function<void(const std::string&, const MetricRow&)>& fn) {
  sqlite3* h = db.sql().getHandle();
  Statement q(h,
              "SELECT date, name, value, known_on FROM metric WHERE security_id = ? "
              "ORDER BY name, date, known_on");
  for (const Security& s : list_securities(db)) {
    q.bind(1, s.id);
    while (q.next()) fn(s.symbol, MetricRow{q.text(0), q.text(1), q.text(2), q.text(3)});
  }
}

void for_each_distribution(Database& db,
                           const std::function<void(const std::string&, std::string_view,
                                                    std::string_view, std::string_view)>& fn) {
  sqlite3* h = db.sql().getHandle();
  Statement q(h,
              "SELECT ex_date, pay_date, per_share FROM distribution WHERE security_id = ? "
              "ORDER BY ex_date");
  for (const Security& s : list_securities(db)) {
    q.bind(1, s.id);
    while (q.next()) fn(s.symbol, q.text(0), q.text(1), q.text(2));
  }
}

// ------------------------------------------------------------ import runs

std::int64_t record_import_run(Database& db, const ImportRun& run) {
  SQLite::Statement st(db.sql(),
                       "INSERT INTO import_run (what, file_name, file_sha256, rows_read, "
                       "rows_added, imported_at) VALUES (?, ?, ?, ?, ?, ?)");
  st.bind(1, run.what);
  // A file name may hold any bytes; the ledger keeps only UTF-8 text, escaped as shown.
  st.bind(2, printable(run.file_name));
  st.bind(3, run.file_sha256);
  st.bind(4, run.rows_read);
  st.bind(5, run.rows_added);
  st.bind(6, utc_timestamp());
  st.exec();
  return db.sql().getLastInsertRowid();
}

namespace {
ImportRun read_run(SQLite::Statement& st) {
  return ImportRun{st.getColumn(0).getInt64(),  st.getColumn(1).getString(),
                   st.getColumn(2).getString(), st.getColumn(3).getString(),
                   st.getColumn(4).getInt64(),  st.getColumn(5).getInt64(),
                   st.getColumn(6).getString()};
}
constexpr const char* kRunColumns =
    "id, what, file_name, file_sha256, rows_read, rows_added, imported_at";
}  // namespace

std::vector<ImportRun> list_import_runs(Database& db) {
  SQLite::Statement st(db.sql(), fmt::format("SELECT {} FROM import_run ORDER BY id", kRunColumns));
  std::vector<ImportRun> out;
  while (st.executeStep()) out.push_back(read_run(st));
  return out;
}

std::optional<ImportRun> find_import_run(Database& db, std::string_view what,
                                         std::string_view sha256) {
  SQLite::Statement st(db.sql(),
                       fmt::format("SELECT {} FROM import_run WHERE what = ? AND file_sha256 = ? "
                                   "ORDER BY id DESC LIMIT 1",
                                   kRunColumns));
  st.bind(1, std::string(what));
  st.bind(2, std::string(sha256));
  if (!st.executeStep()) return std::nullopt;
  return read_run(st);
}

}  // namespace keel::store
