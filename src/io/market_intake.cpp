#include "io/market_intake.h"

#include <fmt/format.h>

#include <cctype>
#include <set>
#include <tuple>
#include <unordered_map>

#include "core/currency.h"
#include "core/error.h"
#include "core/json.h"
#include "core/text.h"
#include "io/csv.h"
#include "io/errors.h"
#include "io/table.h"
#include "store/fx_store.h"
#include "store/ledger_store.h"
#include "store/record_change_store.h"

namespace keel::io {
namespace {

constexpr std::uint64_t kProgressEvery = 1 << 16;
constexpr std::size_t npos = static_cast<std::size_t>(-1);

std::vector<ColumnSpec> columns_for(MarketKind what) {
  switch (what) {
    case MarketKind::securities:
      return {{"symbol"}, {"name"}, {"kind"}, {"currency"}, {"lot_size", false}, {"sector", false}};
    case MarketKind::prices:
      return {{"date"}, {"symbol"}, {"close"}};
    case MarketKind::metrics:
      return {{"date"}, {"symbol"}, {"metric"}, {"value"}, {"known_on", false}};
    case MarketKind::distributions:
      return {{"ex_date"}, {"pay_date", false}, {"symbol"}, {"per_share"}};
    case MarketKind::splits:
      return {{"date"}, {"symbol"}, {"ratio"}};
    case MarketKind::fx:
      return {{"date"}, {"base"}, {"quote"}, {"rate"}};
  }
  return {};
}

// The state one import shares between its rows.
struct Run {
  TableReader& t;
  ErrorList& errors;
  store::MarketWriter& w;
  ImportSummary& sum;
  store::Database& db;
  std::string existing;

  // Former symbols seen in this file, with the handle of the security they
  // name now (kUnknown: no security had that symbol either).
  std::unordered_map<std::string, std::size_t> former;

  // Symbol column `col` resolved to a writer handle, or an error. A symbol a
  // security had before a change still names it, with one note per symbol.
  std::size_t security(std::size_t col) {
    std::string_view sym;
    if (!t.text(col, sym)) return store::MarketWriter::kUnknown;
    std::size_t h = w.security(sym);
    if (h == store::MarketWriter::kUnknown) h = former_security(sym);
    if (h == store::MarketWriter::kUnknown)
      t.error(col, fmt::format("unknown security '{}'; import or add it first", sym));
    return h;
  }

  std::size_t former_security(std::string_view sym) {
    const std::string key(sym);
    if (const auto it = former.find(key); it != former.end()) return it->second;
    std::size_t h = store::MarketWriter::kUnknown;
    if (const auto now = store::find_security_by_former_symbol(db, key)) {
      h = w.security(now->symbol);
      sum.notes.push_back(fmt::format("{}:{}: '{}' is a former symbol of '{}'; booked to it",
                                      errors.file(), t.line(), printable(sym),
                                      printable(now->symbol)));
    }
    former.emplace(key, h);
    return h;
  }

  bool not_negative(std::size_t col, const std::string& v) {
    if (!v.empty() && v.front() == '-') {
      t.error(col, fmt::format("{} must not be negative", v));
      return false;
    }
    return true;
  }
  bool positive(std::size_t col, const std::string& v) {
    if (!not_negative(col, v)) return false;
    if (v == "0") {
      t.error(col, "must be greater than zero");
      return false;
    }
    return true;
  }

  // `key` makes the row's description; it runs only on an error.
  template <typename Key>
  void count(store::Upsert u, std::size_t value_col, Key&& key, std::string_view value_name) {
    switch (u) {
      case store::Upsert::added:
        ++sum.added;
        break;
      case store::Upsert::unchanged:
        ++sum.unchanged;
        break;
      case store::Upsert::replaced:
        ++sum.replaced;
        break;
      case store::Upsert::conflict:
        t.error(value_col, fmt::format("{}: the ledger already has {}{}{}; use --replace to "
                                       "overwrite it",
                                       key(), value_name, value_name.empty() ? "" : " ", existing));
        break;
      case store::Upsert::duplicate:
        t.error(npos, fmt::format("{} appears on an earlier line of this file", key()));
        break;
    }
  }
};

void import_rows(MarketKind what, Run& r, const ImportOptions& options, CsvReader& csv) {
  TableReader& t = r.t;
  std::string a, b, c, d;
  std::string_view text;
  std::uint64_t next_progress = kProgressEvery;
  auto progress = [&] {
    if (options.progress && t.rows() >= next_progress) {
      next_progress += kProgressEvery;
      options.progress(t.rows(), csv.bytes_consumed(), csv.file_size());
    }
  };
  switch (what) {
    case MarketKind::prices: {
      r.w.on_price_problem([&](std::uint64_t line, store::Upsert u, std::size_t sec,
                               std::string_view date, std::string_view existing) {
        const std::string& sym = r.w.symbol(sec);
        if (u == store::Upsert::duplicate)
          r.errors.add(line, "",
                       fmt::format("{} on {} appears on an earlier line of this file", sym, date));
        else
          r.errors.add(line, t.header_name(2),
                       fmt::format("{} on {}: the ledger already has close {}; use --replace to "
                                   "overwrite it",
                                   sym, date, existing));
      });
      while (t.next()) {
        bool ok = t.date(0, a);
        const std::size_t sec = r.security(1);
        ok = t.decimal(2, b) && r.not_negative(2, b) && ok && sec != store::MarketWriter::kUnknown;
        if (ok) r.w.price(sec, a, b, t.line());
        progress();
      }
      const auto counts = r.w.finish_prices();
      r.sum.added += counts.added;
      r.sum.unchanged += counts.unchanged;
      r.sum.replaced += counts.replaced;
      r.errors.sort_by_line();
      break;
    }
    case MarketKind::metrics:
      while (t.next()) {
        bool ok = t.date(0, a);
        const std::size_t sec = r.security(1);
        ok = sec != store::MarketWriter::kUnknown && ok;
        std::string_view name;
        if (t.text(2, name)) {
          try {
            check_identifier("metric name", name, 60);
          } catch (const InputError& e) {
            t.error(2, e.what());
            ok = false;
          }
        } else {
          ok = false;
        }
        ok = t.decimal(3, b) && ok;
        if (t.has(4)) {
          if (t.date(4, c)) {
            if (ok && c < a) {
              t.error(4, fmt::format("{} is before the period date {}; a figure cannot be known "
                                     "before its period ends",
                                     c, a));
              ok = false;
            }
          } else {
            ok = false;
          }
        } else {
          c = a;
        }
        if (ok)
          r.count(
              r.w.metric(sec, name, a, c, b, r.existing), 3,
              [&] { return fmt::format("{} {} for {} known on {}", t.raw(1), name, a, c); },
              "value");
        progress();
      }
      break;
    case MarketKind::distributions:
      while (t.next()) {
        bool ok = t.date(0, a);
        if (t.has(1)) {
          if (t.date(1, b)) {
            if (ok && b < a) {
              t.error(1, fmt::format("{} is before the ex-date {}", b, a));
              ok = false;
            }
          } else {
            ok = false;
          }
        } else {
          b = a;
        }
        const std::size_t sec = r.security(2);
        ok = t.decimal(3, c) && r.positive(3, c) && ok && sec != store::MarketWriter::kUnknown;
        if (ok)
          r.count(
              r.w.distribution(sec, a, b, c, r.existing), 3,
              [&] { return fmt::format("{} ex {}", t.raw(2), a); }, "");
        progress();
      }
      break;
    case MarketKind::splits:
      while (t.next()) {
        bool ok = t.date(0, a);
        if (ok && !options.allow_future) ok = t.not_future(0, Date::parse(a));
        const std::size_t sec = r.security(1);
        ok = t.decimal(2, b) && r.positive(2, b) && ok && sec != store::MarketWriter::kUnknown;
        if (ok) {
          const auto u = r.w.split(sec, a, b, r.existing);
          if (u == store::Upsert::conflict)
            t.error(2, fmt::format("{} on {}: the ledger already records ratio {}; recorded "
                                   "splits cannot be changed",
                                   t.raw(1), a, r.existing));
          else
            r.count(
                u, 2, [&] { return fmt::format("{} on {}", t.raw(1), a); }, "ratio");
        }
        progress();
      }
      break;
    case MarketKind::fx: {
      std::set<std::tuple<std::string, std::string, std::string>> seen;
      store::FxWriter rates(r.db);
      auto code = [&](std::size_t col, std::string& out) {
        std::string_view raw;
        if (!t.text(col, raw)) return false;
        std::string upper(raw);
        for (char& ch : upper) ch = static_cast<char>(std::toupper(static_cast<unsigned char>(ch)));
        if (!is_currency(upper)) {
          t.error(col, fmt::format("'{}' is not an ISO 4217 currency code (such as EUR, USD, JPY)",
                                   printable(raw)));
          return false;
        }
        out = upper;
        return true;
      };
      while (t.next()) {
        bool ok = t.date(0, a);
        ok = code(1, b) && ok;
        ok = code(2, c) && ok;
        if (ok && b == c) {
          t.error(2, fmt::format("the quote currency is the base currency {}; a rate of 1 is "
                                 "never stored",
                                 b));
          ok = false;
        }
        ok = t.decimal(3, d) && r.positive(3, d) && ok;
        if (ok) {
          if (!seen.insert({b, c, a}).second) {
            t.error(npos,
                    fmt::format("{}/{} on {} appears on an earlier line of this file", b, c, a));
          } else {
            const store::FxRateRow row{b, c, Date::parse(a), Decimal::parse(d)};
            r.count(
                rates.upsert(row, options.replace, r.existing), 3,
                [&] { return fmt::format("{}/{} on {}", b, c, a); }, "rate");
          }
        }
        progress();
      }
      break;
    }
    case MarketKind::securities:
      while (t.next()) {
        Security s;
        bool ok = true;
        auto field = [&](std::size_t col, auto&& fn) {
          try {
            fn();
          } catch (const InputError& e) {
            t.error(col, e.what());
            ok = false;
          }
        };
        if (t.text(0, text)) {
          s.symbol = text;
          field(0, [&] { check_identifier("symbol", s.symbol, 40); });
        } else {
          ok = false;
        }
        if (t.text(1, text)) {
          s.name = text;
          field(1, [&] { check_identifier("name", s.name, 200); });
        } else {
          ok = false;
        }
        if (t.text(2, text))
          field(2, [&] { s.kind = parse_security_kind(ascii_lower(text)); });
        else
          ok = false;
        if (t.text(3, text))
          field(3, [&] { s.currency = normalize_currency(text); });
        else
          ok = false;
        if (t.has(4)) {
          if (t.decimal(4, a) && r.positive(4, a))
            s.lot_size = Decimal::parse(a);
          else
            ok = false;
        }
        if (t.has(5)) {
          s.sector = std::string(t.raw(5));
          field(5, [&] { check_identifier("sector", *s.sector, 100); });
        }
        if (ok)
          r.count(
              r.w.security_row(s, r.existing), 1, [&] { return s.symbol; }, "a different entry:");
        progress();
      }
      break;
  }
}

}  // namespace

std::string_view to_string(MarketKind kind) {
  switch (kind) {
    case MarketKind::securities:
      return "securities";
    case MarketKind::prices:
      return "prices";
    case MarketKind::metrics:
      return "metrics";
    case MarketKind::distributions:
      return "distributions";
    case MarketKind::splits:
      return "splits";
    case MarketKind::fx:
      return "fx";
  }
  return "prices";
}

MarketKind parse_market_kind(std::string_view text) {
  for (auto k : {MarketKind::securities, MarketKind::prices, MarketKind::metrics,
                 MarketKind::distributions, MarketKind::splits, MarketKind::fx})
    if (to_string(k) == text) return k;
  throw InputError(
      fmt::format("cannot import or export '{}'; expected one of: accounts, transactions, "
                  "actions, securities, prices, metrics, distributions, splits, fx",
                  printable(text)));
}

CsvReader open_import_csv(const std::filesystem::path& file, const Mapping& mapping,
                          const ImportOptions& options) {
  CsvOptions csv_options;
  csv_options.delimiter = mapping.delimiter;
  csv_options.hash = true;
  if (options.content)
    return CsvReader::from_text(std::string(*options.content), file.string(), csv_options);
  return CsvReader::open(file, csv_options);
}

ImportSummary import_market(store::Database& db, MarketKind what, const std::filesystem::path& file,
                            const ImportOptions& options) {
  const Mapping mapping = options.mapping ? *options.mapping : Mapping{};
  if (!mapping.applies_to.empty() && mapping.applies_to != to_string(what))
    throw InputError(fmt::format("{}: this mapping is for importing {}, not {}",
                                 printable(mapping.source), printable(mapping.applies_to),
                                 to_string(what)));
  CsvReader csv = open_import_csv(file, mapping, options);
  ErrorList errors(input_name(file));
  ImportSummary sum;
  sum.what = what;
  sum.file = input_name(file);
  sum.dry_run = options.dry_run;

  store::ForeignKeyPause pause(db);
  store::WriteTransaction tx(db);
  {
    store::MarketWriter writer(db, options.replace);
    TableReader table(csv, mapping, columns_for(what), errors);
    Run run{table, errors, writer, sum, db, {}, {}};
    import_rows(what, run, options, csv);
    sum.rows = table.rows();
  }
  sum.sha256 = csv.sha256_hex();
  if (!errors.empty()) errors.raise("nothing was changed");
  sum.same_file_before = store::find_import_run(db, to_string(what), sum.sha256);
  if (options.dry_run) return sum;  // the transaction rolls back
  if (sum.added + sum.replaced > 0) {
    store::ImportRun r;
    r.what = std::string(to_string(what));
    r.file_name = is_standard_input(file) ? input_name(file) : file.filename().string();
    r.file_sha256 = sum.sha256;
    r.rows_read = static_cast<std::int64_t>(sum.rows);
    r.rows_added = static_cast<std::int64_t>(sum.added);
    sum.run_id = store::record_import_run(db, r);
  }
  tx.commit();
  return sum;
}

namespace {

// Buffered output, written in large pieces. What is still buffered when an
// error unwinds the export is dropped, never written from a destructor.
class Sink {
 public:
  explicit Sink(OutputFile& out) : out_(out) { buf_.reserve(1 << 20); }
  std::string& buf() { return buf_; }
  void maybe_flush() {
    if (buf_.size() >= (1 << 20)) flush();
  }
  void flush() {
    out_.write(buf_);
    buf_.clear();
  }

 private:
  OutputFile& out_;
  std::string buf_;
};

class Writer {
 public:
  Writer(OutputFile& out, ExportFormat format, std::vector<std::string_view> names)
      : sink_(out), format_(format), names_(std::move(names)) {
    if (format_ == ExportFormat::csv)
      append_csv_record(sink_.buf(), names_);
    else
      sink_.buf() += "[";
  }
  // nullopt-like: an empty view with `null_empty` writes JSON null.
  void row(const std::vector<std::string_view>& values, std::size_t nullable = npos) {
    ++rows_;
    if (format_ == ExportFormat::csv) {
      append_export_record(sink_.buf(), values);
    } else {
      sink_.buf() += rows_ == 1 ? "\n" : ",\n";
      JsonWriter o(sink_.buf(), -1);
      o.begin_object();
      for (std::size_t i = 0; i < names_.size(); ++i) {
        o.key(names_[i]);
        if (i == nullable && values[i].empty())
          o.null();
        else
          o.value(values[i]);
      }
      o.end_object();
    }
    sink_.maybe_flush();
  }
  std::uint64_t finish() {
    if (format_ == ExportFormat::json) sink_.buf() += rows_ == 0 ? "]\n" : "\n]\n";
    sink_.flush();
    return rows_;
  }

 private:
  Sink sink_;
  ExportFormat format_;
  std::vector<std::string_view> names_;
  std::uint64_t rows_ = 0;
};

}  // namespace

std::uint64_t export_market(store::Database& db, MarketKind what, ExportFormat format,
                            OutputFile& out) {
  std::vector<std::string> names;
  for (const auto& c : columns_for(what)) names.push_back(c.name);
  std::vector<std::string_view> views(names.begin(), names.end());
  if (what == MarketKind::metrics) views = {"date", "symbol", "metric", "value", "known_on"};
  Writer w(out, format, views);
  switch (what) {
    case MarketKind::securities:
      for (const Security& s : store::list_securities(db)) {
        const std::string lot = s.lot_size.str();
        w.row({s.symbol, s.name, to_string(s.kind), s.currency, lot, s.sector.value_or("")}, 5);
      }
      break;
    case MarketKind::prices:
      store::for_each_price(
          db, [&](const std::string& sym, std::string_view d, std::string_view close) {
            w.row({d, sym, close});
          });
      break;
    case MarketKind::metrics:
      store::for_each_metric(db, [&](const std::string& sym, const store::MetricRow& m) {
        w.row({m.date, sym, m.name, m.value, m.known_on});
      });
      break;
    case MarketKind::distributions:
      store::for_each_distribution(db, [&](const std::string& sym, std::string_view ex,
                                           std::string_view pay, std::string_view per) {
        w.row({ex, pay, sym, per});
      });
      break;
    case MarketKind::splits: {
      std::unordered_map<std::int64_t, std::string> symbols;
      std::vector<Security> secs = store::list_securities(db);
      for (const auto& s : secs) symbols[s.id] = s.symbol;
      std::vector<Split> splits = store::list_splits(db);
      std::stable_sort(splits.begin(), splits.end(), [&](const Split& x, const Split& y) {
        return symbols[x.security_id] < symbols[y.security_id];
      });
      for (const Split& s : splits) {
        const std::string d = s.date.str(), r = s.ratio.str();
        w.row({d, symbols[s.security_id], r});
      }
      break;
    }
    case MarketKind::fx:
      for (const auto& row : store::list_fx_rates(db)) {
        const std::string d = row.date.str(), r = row.rate.str();
        w.row({d, row.base, row.quote, r});
      }
      break;
  }
  return w.finish();
}

}  // namespace keel::io
