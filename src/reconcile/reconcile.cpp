#include "reconcile/reconcile.h"

#include <fmt/format.h>

#include <map>
#include <set>

#include "core/error.h"
#include "core/files.h"
#include "core/text.h"
#include "io/csv.h"
#include "io/errors.h"
#include "io/sha256.h"
#include "io/table.h"
#include "ledger/posting.h"
#include "model/security.h"
#include "rules/rule.h"
#include "store/ledger_store.h"
#include "store/market_data.h"
#include "store/period_store.h"

namespace keel::reconcile {
namespace {

// How near "a nearby day" is: transactions dated up to this many days after
// the statement day, and voids and distributions this many days around it
// (common practice: settlement and payment lags are days, not months).
constexpr int kNearbyDays = 31;

enum Col : std::size_t { kAccount, kSymbol, kQuantity, kCostBasis, kCurrency, kCash };

std::string unknown(std::string_view what, std::string_view name,
                    const std::vector<std::string>& known) {
  std::string why = fmt::format("unknown {} '{}'", what, printable(name));
  if (auto near = rules::nearest(name, known)) why += fmt::format("; did you mean '{}'?", *near);
  return why;
}

std::vector<std::string> account_names(store::Database& db) {
  std::vector<std::string> out;
  for (const auto& a : store::list_accounts(db)) out.push_back(a.name);
  return out;
}
std::vector<std::string> symbols(store::Database& db) {
  std::vector<std::string> out;
  for (const auto& s : store::list_securities(db)) out.push_back(s.symbol);
  return out;
}

std::string describe(const Transaction& t, const std::string& symbol) {
  std::string figures;
  if (t.quantity) figures += fmt::format(" of {} {}", t.quantity->str(), symbol);
  if (t.amount)
    figures += fmt::format(" of {}{}", t.amount->str(), symbol.empty() ? "" : " (" + symbol + ")");
  return fmt::format("transaction {} (a {}{} on {})", t.id, to_string(t.kind), figures,
                     t.date.str());
}

// What a transaction does to an account's cash and to its units of a security.
Decimal cash_effect(const Transaction& t) {
  const Decimal gross = t.quantity && t.price ? *t.quantity * *t.price : Decimal();
  switch (t.kind) {
    case TxnKind::deposit:
    case TxnKind::dividend:
    case TxnKind::interest:
      return *t.amount;
    case TxnKind::withdrawal:
    case TxnKind::tax:
    case TxnKind::fee:
      return -*t.amount;
    case TxnKind::buy:
      return -(gross + t.fee);
    case TxnKind::sell:
      return gross - t.fee;
    case TxnKind::transfer_in:
      return t.security_id ? -t.fee : *t.amount;
    case TxnKind::transfer_out:
      return t.security_id ? -t.fee : -*t.amount;
    case TxnKind::exchange:  // cash in two currencies; see the currency lines
    case TxnKind::void_entry:
      break;
  }
  return Decimal();
}
Decimal unit_effect(const Transaction& t) {
  if (!t.quantity || !t.security_id) return Decimal();
  return t.kind == TxnKind::buy || t.kind == TxnKind::transfer_in ? *t.quantity : -*t.quantity;
}

Decimal cash_effect(const io::OfxTransaction& t) {
  Transaction x;
  x.kind = t.kind;
  x.quantity = t.quantity;
  x.price = t.price;
  x.amount = t.amount;
  x.fee = t.fee.value_or(Decimal());
  if (!t.security.empty() && !is_cash_kind(t.kind)) x.security_id = 1;
  return t.amount || x.quantity ? cash_effect(x) : Decimal();
}

// A split ratio small enough to be a real one: n, 1/n or p/q with p, q <= 10.
std::optional<Decimal> split_ratio(const Decimal& ledger, const Decimal& statement) {
  if (!ledger.is_positive() || !statement.is_positive() || ledger == statement) return std::nullopt;
  for (int q = 1; q <= 10; ++q)
    for (int p = 1; p <= 10 * q && p <= 100; ++p) {
      if (p == q) continue;
      if (ledger * Decimal(p) == statement * Decimal(q)) {
        const Decimal ratio = Decimal::divide(Decimal(p), Decimal(q), 6);
        if (ratio * Decimal(q) == Decimal(p)) return ratio;
        return std::nullopt;  // a ratio like 1/3 that no finite decimal writes
      }
    }
  return std::nullopt;
}

struct Context {
  store::Database& db;
  const BrokerStatement& statement;
  LedgerLog log;
  std::unordered_set<std::int64_t> voided;
  std::map<std::int64_t, std::string> symbol_of;
  std::set<std::pair<std::int64_t, std::string>> refs;  // (account, ref) booked
};

struct Candidate {
  Decimal effect;
  std::string sentence;
};

// The candidates whose effects add up to exactly `delta`: every single one
// that does, else the first pair, else the first three.
std::vector<std::string> matching(const std::vector<Candidate>& all, const Decimal& delta) {
  std::vector<std::string> out;
  const std::size_t n = std::min<std::size_t>(all.size(), 24);
  for (std::size_t i = 0; i < n; ++i)
    if (all[i].effect == delta) out.push_back(all[i].sentence);
  if (!out.empty()) return out;
  for (std::size_t i = 0; i < n; ++i)
    for (std::size_t j = i + 1; j < n; ++j)
      if (all[i].effect + all[j].effect == delta)
        return {fmt::format("together: {}; and {}", all[i].sentence, all[j].sentence)};
  for (std::size_t i = 0; i < n; ++i)
    for (std::size_t j = i + 1; j < n; ++j)
      for (std::size_t k = j + 1; k < n; ++k)
        if (all[i].effect + all[j].effect + all[k].effect == delta)
          return {fmt::format("together: {}; {}; and {}", all[i].sentence, all[j].sentence,
                              all[k].sentence)};
  return out;
}

std::vector<std::string> explain(Context& c, const Account& account,
                                 std::optional<std::int64_t> security, const Decimal& delta,
                                 bool units) {
  std::vector<Candidate> out;
  const Date day = c.statement.day;
  for (const auto& t : c.log.transactions) {
    if (t.account_id != account.id || t.kind == TxnKind::void_entry) continue;
    if (units && t.security_id != security) continue;
    const Decimal effect = units ? unit_effect(t) : cash_effect(t);
    if (effect.is_zero()) continue;
    const std::string sym = t.security_id ? c.symbol_of[*t.security_id] : "";
    if (!c.voided.count(t.id) && t.date > day && t.date <= day.plus_days(kNearbyDays))
      out.push_back({effect, fmt::format("{} is dated after the statement day", describe(t, sym))});
    if (c.voided.count(t.id) && t.date <= day && day - t.date <= kNearbyDays)
      out.push_back({effect, fmt::format("{} was voided", describe(t, sym))});
  }
  // Tax withheld from income is its own row in the ledger (see io/ofx.h).
  auto withheld = [&](const io::OfxTransaction& t) {
    const std::string tax_ref = t.fitid + ":withholding";
    if (units || !t.withheld || c.refs.count({account.id, tax_ref})) return;
    out.push_back(
        {-*t.withheld, fmt::format("the statement lists tax of {} withheld on {} (FITID "
                                   "{}, line {}) that the ledger does not hold",
                                   t.withheld->str(), t.date.str(), printable(tax_ref), t.line)});
  };
  for (const auto& t : c.statement.listed) {
    if (!t.refused.empty() || t.skipped || t.date > day) continue;
    if (c.refs.count({account.id, t.fitid})) {
      withheld(t);
      continue;
    }
    Decimal effect;
    if (units) {
      const auto sec = store::find_security(c.db, t.security);
      if (!sec || sec->id != security || !t.quantity) continue;
      const bool in = t.kind == TxnKind::buy || t.kind == TxnKind::transfer_in;
      effect = in ? *t.quantity : -*t.quantity;
    } else {
      effect = cash_effect(t);
    }
    if (effect.is_zero()) continue;
    std::string figures = t.quantity ? fmt::format("{} {}", t.quantity->str(), t.security)
                                     : (t.amount ? t.amount->str() : std::string());
    out.push_back({effect, fmt::format("the statement lists a {} of {} on {} (FITID {}, line {}) "
                                       "that the ledger does not hold",
                                       to_string(t.kind), printable(figures), t.date.str(),
                                       printable(t.fitid), t.line)});
    withheld(t);
  }
  if (!units) {
    // A distribution in the market data, times the units held on its ex-date.
    store::for_each_distribution(c.db, [&](const std::string& symbol, std::string_view ex,
                                           std::string_view pay, std::string_view per_share) {
      const Date ex_date = Date::parse(ex), pay_date = Date::parse(pay);
      if (pay_date > day || day - pay_date > kNearbyDays) return;
      const auto sec = store::find_security(c.db, symbol);
      if (!sec) return;
      const Book book = replay(c.log, ex_date.plus_days(-1));
      const auto& positions = book.account(account.id).positions;
      const auto pos = positions.find(sec->id);
      if (pos == positions.end()) return;
      const Decimal amount = pos->second.quantity() * Decimal::parse(per_share);
      out.push_back(
          {amount, fmt::format("a dividend of {} x {} {} = {} (distribution with "
                               "ex-date {}, paid {}) is not booked",
                               std::string(per_share), pos->second.quantity().str(),
                               printable(symbol), amount.str(), ex_date.str(), pay_date.str())});
    });
  }
  return matching(out, delta);
}

}  // namespace

BrokerStatement read_statement_csv(store::Database& db, const std::filesystem::path& file, Date day,
                                   const std::optional<io::Mapping>& mapping) {
  const io::Mapping m = mapping ? *mapping : io::Mapping{};
  if (!m.applies_to.empty() && m.applies_to != "statement")
    throw InputError(fmt::format("{}: this mapping is for importing {}, not a statement",
                                 printable(m.source), printable(m.applies_to)));
  io::CsvOptions options;
  options.delimiter = m.delimiter;
  options.hash = true;
  io::CsvReader csv = io::CsvReader::open(file, options);
  io::ErrorList errors(input_name(file));
  BrokerStatement st;
  st.file = input_name(file);
  st.day = day;
  const auto accounts = account_names(db);
  const auto known_symbols = symbols(db);
  {
    io::TableReader t(csv, m,
                      {{"account"},
                       {"symbol", false},
                       {"quantity", false},
                       {"cost_basis", false},
                       {"currency", false},
                       {"cash", false}},
                      errors);
    std::string buf;
    while (t.next()) {
      StatementLine line;
      line.line = t.line();
      std::string_view text;
      if (!t.text(kAccount, text)) continue;
      line.account = std::string(text);
      if (!store::find_account(db, line.account)) {
        t.error(kAccount, unknown("account", line.account, accounts));
        continue;
      }
      bool ok = true;
      auto decimal = [&](std::size_t col) -> std::optional<Decimal> {
        if (!t.has(col)) return std::nullopt;
        if (t.decimal(col, buf)) return Decimal::parse(buf);
        ok = false;
        return std::nullopt;
      };
      if (t.has(kSymbol)) {
        line.symbol = std::string(t.raw(kSymbol));
        if (!store::find_security(db, *line.symbol)) {
          t.error(kSymbol, unknown("security", *line.symbol, known_symbols));
          continue;
        }
      }
      line.quantity = decimal(kQuantity);
      line.cost_basis = decimal(kCostBasis);
      line.cash = decimal(kCash);
      if (t.has(kCurrency)) {
        try {
          line.currency = normalize_currency(t.raw(kCurrency));
        } catch (const InputError& e) {
          t.error(kCurrency, e.what());
          continue;
        }
      }
      if (!ok) continue;
      const bool position = line.symbol.has_value(), cash = line.cash.has_value();
      if (position == cash) {
        t.error(static_cast<std::size_t>(-1),
                "a row is either a position (symbol and quantity) or cash (cash and currency)");
        continue;
      }
      if (position && !line.quantity) {
        t.error(kQuantity, "is empty; a position needs its units");
        continue;
      }
      if (cash && !line.currency) {
        t.error(kCurrency, "is empty; cash needs its currency");
        continue;
      }
      st.lines.push_back(std::move(line));
    }
  }
  st.sha256 = csv.sha256_hex();
  if (!errors.empty()) errors.raise("nothing was recorded");
  return st;
}

BrokerStatement read_statement_ofx(store::Database& db, const std::filesystem::path& file,
                                   const std::string& account) {
  const io::OfxStatement ofx = io::read_ofx(file);
  BrokerStatement st;
  st.file = input_name(file);
  st.sha256 = io::sha256_file_hex(file);
  st.day = ofx.as_of;
  const auto a = store::find_account(db, account);
  if (!a) throw InputError("--account: " + unknown("account", account, account_names(db)));
  const auto known_symbols = symbols(db);
  for (const auto& p : ofx.positions) {
    if (!store::find_security(db, p.security))
      throw InputError(fmt::format("{}:{}: element <SECID>: {}", printable(st.file), p.line,
                                   unknown("security", p.security, known_symbols)));
    StatementLine line;
    line.line = p.line;
    line.account = a->name;
    line.symbol = p.security;
    line.quantity = p.units;
    st.lines.push_back(std::move(line));
  }
  if (ofx.cash) {
    StatementLine line;
    line.account = a->name;
    line.currency = ofx.currency.empty() ? a->currency : ofx.currency;
    line.cash = *ofx.cash;
    st.lines.push_back(std::move(line));
  }
  st.listed = ofx.transactions;
  return st;
}

Result compare(store::Database& db, const BrokerStatement& statement) {
  Context c{db, statement, ledger::load_log(db), {}, {}, {}};
  c.voided = voided_ids(c.log.transactions);
  for (const auto& s : store::list_securities(db)) c.symbol_of[s.id] = s.symbol;
  for (const auto& t : c.log.transactions)
    if (t.ref) c.refs.emplace(t.account_id, *t.ref);
  const Book book = replay(c.log, statement.day);

  Result r;
  r.day = statement.day;
  std::vector<Account> accounts;
  for (const auto& line : statement.lines) {
    const Account a = store::account_named(db, line.account);
    if (std::none_of(accounts.begin(), accounts.end(),
                     [&](const Account& x) { return x.id == a.id; }))
      accounts.push_back(a);
  }
  for (const auto& a : accounts) {
    r.accounts.push_back(a.name);
    const AccountBook& held = book.account(a.id);
    std::map<std::string, Decimal> stated_units, stated_cash;
    std::map<std::string, Decimal> stated_cost;
    for (const auto& line : statement.lines) {
      if (line.account != a.name) continue;
      if (line.symbol) {
        stated_units[*line.symbol] += *line.quantity;
        if (line.cost_basis) stated_cost[*line.symbol] += *line.cost_basis;
      } else {
        stated_cash[*line.currency] += *line.cash;
      }
    }
    std::map<std::string, std::pair<std::int64_t, Decimal>> ledger_units;  // symbol -> (id, units)
    std::map<std::string, Decimal> ledger_cost;
    for (const auto& [sec, pos] : held.positions) {
      ledger_units[c.symbol_of[sec]] = {sec, pos.quantity()};
      ledger_cost[c.symbol_of[sec]] = pos.cost();
    }
    std::set<std::string> all;
    for (const auto& [s, u] : stated_units) all.insert(s);
    for (const auto& [s, u] : ledger_units) all.insert(s);
    for (const auto& symbol : all) {
      ++r.items;
      const auto lu = ledger_units.find(symbol);
      const Decimal mine = lu == ledger_units.end() ? Decimal() : lu->second.second;
      const Decimal theirs = stated_units.count(symbol) ? stated_units[symbol] : Decimal();
      const auto security = store::find_security(db, symbol);
      if (mine != theirs) {
        Difference d{a.name, symbol + " units", mine, theirs, {}};
        d.explanations = explain(c, a, security ? std::optional(security->id) : std::nullopt,
                                 theirs - mine, true);
        if (auto ratio = split_ratio(mine, theirs))
          d.explanations.push_back(
              fmt::format("a split of {} with ratio {} ({} new units per old unit) is not recorded",
                          symbol, ratio->str(), ratio->str()));
        r.differences.push_back(std::move(d));
      }
      if (stated_cost.count(symbol)) {
        ++r.items;
        const Decimal cost = ledger_cost.count(symbol) ? ledger_cost[symbol] : Decimal();
        if (cost != stated_cost[symbol])
          r.differences.push_back({a.name, symbol + " cost basis", cost, stated_cost[symbol], {}});
      }
    }
    stated_cash.try_emplace(a.currency, Decimal());
    if (!std::any_of(statement.lines.begin(), statement.lines.end(),
                     [&](const StatementLine& l) { return l.account == a.name && l.cash; }))
      stated_cash.erase(a.currency);  // a statement without cash lines says nothing of cash
    for (const auto& [currency, theirs] : stated_cash) {
      ++r.items;
      const Decimal mine = currency == a.currency ? held.cash : Decimal();
      if (mine == theirs) continue;
      Difference d{a.name, "cash " + currency, mine, theirs, {}};
      if (currency == a.currency)
        d.explanations = explain(c, a, std::nullopt, theirs - mine, false);
      r.differences.push_back(std::move(d));
    }
  }
  return r;
}

Result reconcile(store::Database& db, const BrokerStatement& statement) {
  store::WriteTransaction tx(db);
  Result r = compare(db, statement);
  if (!r.differences.empty() || r.accounts.empty()) return r;
  store::Reconciliation rec;
  rec.day = statement.day;
  rec.file_name = std::filesystem::path(statement.file).filename().string();
  rec.file_sha256 = statement.sha256;
  for (const auto& name : r.accounts) rec.account_ids.push_back(store::account_named(db, name).id);
  r.recorded = store::insert_reconciliation(db, rec);
  tx.commit();
  return r;
}

}  // namespace keel::reconcile
