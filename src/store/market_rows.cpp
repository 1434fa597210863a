#include "store/market_rows.h"

#include <SQLiteCpp/Statement.h>

#include <exception>
#include <utility>

#include "core/error.h"

namespace keel::store {
namespace {

constexpr const char* kScanFunction = "keel_market_rows";

}  // namespace

struct MarketRows::Impl {
  // The aggregate that hands each row to `take`; registered on the
  // connection for the reader's lifetime (before the statements using it).
  struct Scan {
    sqlite3* h;
    Take take = nullptr;
    void* context = nullptr;
    bool stopped = false;
    std::exception_ptr failed;
    explicit Scan(sqlite3* handle) : h(handle) {
      const int rc =
          sqlite3_create_function_v2(h, kScanFunction, 3, SQLITE_UTF8 | SQLITE_DIRECTONLY, this,
                                     nullptr, &step, &final, nullptr);
      if (rc != SQLITE_OK) throw_sqlite_error(h, rc);
    }
    ~Scan() {
      sqlite3_create_function_v2(h, kScanFunction, 3, SQLITE_UTF8, nullptr, nullptr, nullptr,
                                 nullptr, nullptr);
    }
    Scan(const Scan&) = delete;
    Scan& operator=(const Scan&) = delete;
    static std::string_view text(sqlite3_value* v) {
      const auto* p = reinterpret_cast<const char*>(sqlite3_value_text(v));
      return p ? std::string_view(p, static_cast<std::size_t>(sqlite3_value_bytes(v)))
               : std::string_view{};
    }
    static void step(sqlite3_context* ctx, int, sqlite3_value** args) {
      auto* scan = static_cast<Scan*>(sqlite3_user_data(ctx));
      if (scan->stopped) return;
      try {
        if (!scan->take(scan->context, Row{text(args[0]), text(args[1]), text(args[2])})) {
          // Ends the statement here: the rows left are not wanted.
          scan->stopped = true;
          sqlite3_result_error(ctx, "enough", -1);
        }
      } catch (...) {
        // Never through SQLite's C frames: stop the scan, throw again after it.
        scan->failed = std::current_exception();
        sqlite3_result_error(ctx, "interrupted", -1);
      }
    }
    static void final(sqlite3_context* ctx) { sqlite3_result_null(ctx); }
    void run(Statement& st, Take t, void* c) {
      take = t;
      context = c;
      stopped = false;
      failed = nullptr;
      try {
        while (st.next()) {
        }
      } catch (...) {
        st.reset();
        if (!failed && !stopped) throw;
      }
      if (failed) std::rethrow_exception(std::exchange(failed, nullptr));
    }
  } scan;

  explicit Impl(sqlite3* h)
      : scan(h),
        // The primary key (security_id, date) gives the rows in date order;
        // the reader checks that they come so.
        scan_closes(h,
                    "SELECT keel_market_rows(date, close, '') FROM price "
                    "WHERE security_id = ? AND date >= ?"),
        scan_close_days(h,
                        "SELECT keel_market_rows(date, '', '') FROM price "
                        "WHERE security_id = ? AND date >= ?"),
        // The primary key (security_id, name, date, known_on) gives the order.
        scan_figures(h,
                     "SELECT keel_market_rows(date, known_on, value) FROM metric "
                     "WHERE security_id = ? AND name = ?"),
        closes_until(h,
                     "SELECT date, close FROM price WHERE security_id = ? AND date <= ? "
                     "ORDER BY date DESC"),
        first_close_after(h,
                          "SELECT date FROM price WHERE security_id = ? AND date > ? "
                          "ORDER BY date LIMIT 1"),
        // The primary key (security_id, name, date, known_on) serves the order.
        figures_until(h,
                      "SELECT date, known_on, value FROM metric WHERE security_id = ? AND "
                      "name = ? AND known_on <= ? ORDER BY date DESC, known_on DESC"),
        distributions_of(h,
                         "SELECT security_id, ex_date, pay_date, per_share FROM distribution "
                         "WHERE security_id = ? AND ex_date >= ? AND ex_date <= ? "
                         "ORDER BY ex_date"),
        distributions_all(h,
                          "SELECT security_id, ex_date, pay_date, per_share FROM distribution "
                          "WHERE ex_date >= ? AND ex_date <= ? ORDER BY ex_date, security_id"),
        splits_of(h,
                  "SELECT security_id, date, ratio FROM split WHERE security_id = ? "
                  "AND date >= ? AND date <= ? ORDER BY date"),
        splits_all(h,
                   "SELECT security_id, date, ratio FROM split WHERE date >= ? AND date <= ? "
                   "ORDER BY date, security_id"),
        close_pack(h, "SELECT last_day, packed FROM close_pack WHERE security_id = ?") {}

  Statement scan_closes, scan_close_days, scan_figures;
  Statement closes_until, first_close_after;
  Statement figures_until;
  Statement distributions_of, distributions_all, splits_of, splits_all;
  Statement close_pack;
  // Bound text must outlive the statement's run: kept here.
  std::string a, b, c;
};

MarketRows::MarketRows(Database& db) : impl_(std::make_unique<Impl>(db.sql().getHandle())) {}
MarketRows::~MarketRows() = default;

namespace {

// Restarts `st` with one security and two bound texts kept in `x` and `y`.
Statement& restart(Statement& st, std::int64_t id, std::string& x, std::string_view xv,
                   std::string& y, std::string_view yv) {
  st.reset();
  x.assign(xv);
  y.assign(yv);
  return st.bind(1, id).bind(2, x).bind(3, y);
}

// Restarts `st` with one security and one bound text kept in `x`.
Statement& restart(Statement& st, std::int64_t id, std::string& x, std::string_view xv) {
  st.reset();
  x.assign(xv);
  return st.bind(1, id).bind(2, x);
}

}  // namespace

Statement& MarketRows::closes_until(std::int64_t security_id, std::string_view day) {
  return restart(impl_->closes_until, security_id, impl_->a, day);
}

void MarketRows::scan_closes(std::int64_t security_id, std::string_view from, Take take,
                             void* context) {
  auto& m = *impl_;
  m.scan.run(restart(m.scan_closes, security_id, m.a, from), take, context);
}

void MarketRows::scan_close_days(std::int64_t security_id, std::string_view from, Take take,
                                 void* context) {
  auto& m = *impl_;
  m.scan.run(restart(m.scan_close_days, security_id, m.a, from), take, context);
}

void MarketRows::scan_figures(std::int64_t security_id, std::string_view metric, Take take,
                              void* context) {
  auto& m = *impl_;
  m.scan.run(restart(m.scan_figures, security_id, m.a, metric), take, context);
}

std::optional<MarketRows::PackRow> MarketRows::close_pack(std::int64_t security_id) {
  auto& st = impl_->close_pack;
  st.reset();
  st.bind(1, security_id);
  if (!st.next()) return std::nullopt;
  return PackRow{st.text(0), st.blob(1)};  // valid until the next call resets the statement
}

Statement& MarketRows::first_close_after(std::int64_t security_id, std::string_view day) {
  return restart(impl_->first_close_after, security_id, impl_->a, day);
}

Statement& MarketRows::figures_until(std::int64_t security_id, std::string_view metric,
                                     std::string_view day) {
  return restart(impl_->figures_until, security_id, impl_->a, metric, impl_->b, day);
}

namespace {

// One security's rows of a span through `of`, or every security's through `all`.
Statement& span_of(Statement& of, Statement& all, std::optional<std::int64_t> security_id,
                   std::string& a, std::string_view from, std::string& b, std::string_view to) {
  if (security_id) return restart(of, *security_id, a, from, b, to);
  all.reset();
  a.assign(from);
  b.assign(to);
  return all.bind(1, a).bind(2, b);
}

}  // namespace

Statement& MarketRows::distributions_between(std::optional<std::int64_t> security_id,
                                             std::string_view from, std::string_view to) {
  auto& m = *impl_;
  return span_of(m.distributions_of, m.distributions_all, security_id, m.a, from, m.b, to);
}

Statement& MarketRows::splits_between(std::optional<std::int64_t> security_id,
                                      std::string_view from, std::string_view to) {
  auto& m = *impl_;
  return span_of(m.splits_of, m.splits_all, security_id, m.a, from, m.b, to);
}

bool can_keep_close_packs(Database& db) {
  sqlite3* h = db.sql().getHandle();
  return !db.read_only() && sqlite3_db_readonly(h, "main") == 0 && sqlite3_get_autocommit(h) != 0;
}

std::int64_t change_count(Database& db) {
  Statement st(db.sql().getHandle(), "PRAGMA data_version");
  const std::int64_t v = st.next() ? st.integer(0) : 0;
  st.reset();
  return v;
}

bool keep_close_packs(Database& db, const std::vector<KeptPack>& packs, std::int64_t since) {
  if (packs.empty() || !can_keep_close_packs(db)) return false;
  try {
    WriteTransaction tx(db);
    // Another connection's commit since the closes were read may have
    // changed them: those packs could be stale, so keep none.
    if (change_count(db) != since) return false;
    Statement put(db.sql().getHandle(),
                  "INSERT OR REPLACE INTO close_pack (security_id, last_day, packed) "
                  "VALUES (?, ?, ?)");
    for (const auto& p : packs)
      put.bind(1, p.security_id).bind(2, p.last_day).bind_blob(3, p.packed).run();
    tx.commit();
    return true;
  } catch (const LedgerError&) {
    // Busy, disk full, a read-only folder: the command goes on without packs.
    return false;
  }
}

std::vector<LatestClose> latest_closes(Database& db) {
  // One seek per security to the end of its key range gives one value: the
  // date and the close joined, the date being the first 10 bytes of an ISO
  // day; '' for a date of another length (stored by other means), for which
  // the exact statement below runs instead.
  Statement joined(db.sql().getHandle(),
                   "SELECT s.id, (SELECT CASE WHEN length(CAST(p.date AS BLOB)) = 10 "
                   "THEN p.date || p.close ELSE '' END FROM price p WHERE p.security_id = s.id "
                   "ORDER BY p.date DESC LIMIT 1) FROM security s ORDER BY s.id");
  std::vector<LatestClose> out;
  bool odd = false;
  while (!odd && joined.next()) {
    if (joined.null(1)) continue;
    const std::string_view both = joined.text(1);
    odd = both.size() <= 10;
    if (!odd)
      out.push_back(LatestClose{joined.integer(0), std::string(both.substr(0, 10)),
                                std::string(both.substr(10))});
  }
  if (!odd) return out;
  joined.reset();
  out.clear();
  // Per security: max(date) seeks to the end of its key range, and the row
  // of that day is found through the key again.
  Statement st(db.sql().getHandle(),
               "SELECT s.id, p.date, p.close FROM security s JOIN price p "
               "ON p.security_id = s.id AND p.date = "
               "(SELECT max(date) FROM price WHERE security_id = s.id) ORDER BY s.id");
  while (st.next())
    out.push_back(LatestClose{st.integer(0), std::string(st.text(1)), std::string(st.text(2))});
  return out;
}

std::vector<std::string> metric_names(Database& db) {
  // One seek per name through the index metric_by_name_known, instead of
  // reading every figure for DISTINCT.
  Statement next(db.sql().getHandle(), "SELECT min(name) FROM metric WHERE name > ?");
  std::vector<std::string> out;
  std::string after;
  while (true) {
    next.bind(1, after);
    if (!next.next() || next.null(0)) break;
    out.emplace_back(next.text(0));
    next.reset();
    after = out.back();
  }
  next.reset();
  return out;
}

}  // namespace keel::store
