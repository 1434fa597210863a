#include "report/statement.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <set>

#include "core/error.h"
#include "core/text.h"
#include "ledger/accounts.h"
#include "ledger/fx_cash.h"
#include "ledger/posting.h"
#include "market/day_view.h"
#include "market/series.h"
#include "store/ledger_store.h"
#include "store/period_store.h"
#include "store/price_write.h"

namespace keel::report {
namespace {

// Weights are shown as percentages with two places; six places of the fraction
// keep that exact.
constexpr int kWeightPlaces = 6;

Decimal weight_of(const Decimal& part, const Decimal& whole) {
  if (whole.is_zero()) return Decimal();
  return Decimal::divide(part, whole, kWeightPlaces);
}

PerformanceLine line_from(const std::string& label, const perf::ReturnsReport& rep) {
  const auto& r = rep.result;
  PerformanceLine line;
  line.label = label;
  line.available = true;
  line.from = r.from;
  line.to = r.to;
  line.days = r.days;
  line.twr = r.twr.period;
  line.twr_annualized = r.twr.annualized;
  if (r.mwr.status == perf::MwrStatus::kOk && r.mwr_figure) {
    line.mwr_period = r.mwr_figure->period;
    line.mwr_annualized = r.mwr_figure->annualized;
  } else {
    line.mwr_note = perf::mwr_words(r.mwr);
  }
  if (r.benchmark) {
    line.benchmark = r.benchmark->benchmark.period;
    line.benchmark_annualized = r.benchmark->benchmark.annualized;
    line.excess = r.benchmark->excess_arithmetic;
    line.excess_annualized = r.benchmark->excess_arithmetic_annualized;
  }
  return line;
}

// Differences below half a basis point vanish when shown with two places.
bool differ(double a, double b) {
  return std::abs(a - b) >= 0.00005;
}

std::string twr_mwr_words(const PerformanceLine& year) {
  if (!year.twr || !year.mwr_period || !differ(*year.twr, *year.mwr_period)) return "";
  const bool higher = *year.mwr_period > *year.twr;
  return fmt::format(
      "The money-weighted return ({:.2f}%) is {} than the time-weighted return ({:.2f}%). The "
      "time-weighted return measures the investments alone, whatever money came or went; the "
      "money-weighted return weighs each part of the year by the money invested in it, so the "
      "timing of deposits, withdrawals and transfers moves it. Here more money was at work in "
      "the {} part of the year.",
      *year.mwr_period * 100, higher ? "higher" : "lower", *year.twr * 100,
      higher ? "stronger" : "weaker");
}

std::vector<GrowthPoint> portfolio_growth(const perf::PerfResult& r) {
  std::vector<GrowthPoint> out{{r.from.plus_days(-1), 1.0}};
  double level = 1.0;
  for (const auto& d : r.daily) {
    level *= 1.0 + d.r;
    out.push_back({d.day, level});
  }
  if (out.back().day < r.to) out.push_back({r.to, level});
  return out;
}

std::vector<GrowthPoint> benchmark_growth(store::Database& db, const std::string& symbol, Date from,
                                          Date to) {
  const auto security = store::security_with_symbol(db, symbol);
  const Date before = from.plus_days(-1);
  market::Series::Request span;
  span.securities = std::vector<std::int64_t>{security.id};
  span.from = before;
  span.to = to;
  const auto closes = market::Series::load(db, span).closes(security.id);
  std::vector<GrowthPoint> out;
  if (closes.empty() || closes.front().day > before) return out;
  const double base = closes.front().price.to_double();
  out.push_back({before, 1.0});
  for (std::size_t i = 1; i < closes.size(); ++i)
    out.push_back({closes[i].day, closes[i].price.to_double() / base});
  if (out.back().day < to) out.push_back({to, out.back().level});
  return out;
}

// Whether the benchmark has a close on or before `day`.
bool priced_by(const market::View& view, const std::string& symbol, Date day) {
  const Security* security = view.security(symbol);
  return security && view.close(security->id, day).has_value();
}

Decimal unrealized_total(const ledger::Holdings& h) {
  Decimal total;
  for (const auto& p : h.positions) total += p.unrealized_gain;
  return total;
}

// Foreign cash's cost is kept in its account's currency (`kept`, by account
// name); in another reporting currency it goes over at the rate of the day
// valued.
void cost_in_reporting(ledger::Holdings& h, const std::map<std::string, std::string>& kept,
                       const std::string& reporting, const market::View& view) {
  for (auto& c : h.cash)
    if (!c.currency.empty() && !c.own && kept.at(c.account) != reporting)
      c.cost = view.convert(c.cost, kept.at(c.account), reporting, h.as_of);
}

// Foreign cash's value less its cost; an account's own cash has none (its
// move in another reporting currency is translation).
Decimal fx_cash_unrealized(const ledger::Holdings& h) {
  Decimal total;
  for (const auto& c : h.cash)
    if (!c.currency.empty() && !c.own) total += c.currency_gain();
  return total;
}

}  // namespace

Decimal YearSummary::explained_closing() const {
  return opening_value + deposits - withdrawals + transfers_in - transfers_out + dividends -
         withholding + interest - fees + realized_gain + unrealized_change() - unrealized_moved +
         fx_cash_realized + fx_cash_unrealized_change() + translation;
}

std::vector<std::string> statement_cautions() {
  return {
      "Past performance does not predict future results. These figures describe what happened, "
      "not what will; they are not investment advice.",
      "This statement is for your own records. It is not a tax form and does not replace the "
      "documents your broker or bank must issue.",
      "Tax treatment depends on local rules (what counts as long-term, how withholding is "
      "credited, how fees are treated). Check with your local tax authority or a licensed "
      "professional.",
  };
}

std::string RateUsed::source() const {
  if (row_rate) return "the row's rate";
  std::string how;
  if (day->how == market::FxHow::inverted)
    how = fmt::format(", inverted from {}/{}", day->quote, day->base);
  if (day->how == market::FxHow::crossed) how = fmt::format(", crossed through {}", day->pivot);
  return fmt::format("stored, {}{}", day->day.str(), how);
}

std::string statement_years() {
  return fmt::format("{} to {}; it looks back {} years", kFirstStatementYear, kLastStatementYear,
                     kFirstStatementYear - 1);
}

Statement build_statement(store::Database& db, const StatementRequest& request) {
  if (request.year < kFirstStatementYear || request.year > kLastStatementYear)
    throw InputError(fmt::format("--year: {} is outside the years a statement covers ({})",
                                 request.year, statement_years()));
  if (request.long_term_days && *request.long_term_days < 1)
    throw InputError(fmt::format("--long-term-days: {} is not a number of days; give 1 or more",
                                 *request.long_term_days));

  Statement s;
  s.year = request.year;
  std::optional<std::int64_t> account_id;
  const auto accounts = store::list_accounts(db);
  if (request.account) {
    const auto account = store::find_account(db, *request.account);
    if (!account)
      throw InputError(
          fmt::format("--account: there is no account named '{}'", printable(*request.account)));
    account_id = account->id;
    s.currency = request.currency.value_or(account->currency);
  } else {
    s.currency = ledger::reporting_currency(db, request.currency, std::nullopt);
  }
  std::map<std::string, std::string> currency_of_account;  // by name
  for (const auto& a : accounts) {
    currency_of_account[a.name] = a.currency;
    if ((!account_id || a.id == *account_id) && a.currency != s.currency) s.translated = true;
  }
  const std::optional<std::string> translated_to =
      s.translated ? std::optional<std::string>(s.currency) : std::nullopt;
  for (const auto& [id, day] : store::last_reconciled_days(db))
    for (const auto& a : accounts)
      if (a.id == id && (!account_id || *account_id == id)) s.reconciled.emplace_back(a.name, day);
  if (request.benchmark && !store::find_security(db, *request.benchmark))
    throw InputError(fmt::format("--benchmark: there is no security with symbol '{}'",
                                 printable(*request.benchmark)));

  // The ledger is read once; every period below is measured from this copy.
  const perf::LedgerData data = perf::LedgerData::load(db);

  // Performance: this year, since inception, trailing 3 and 5 years where the
  // ledger's history covers them; the returns module measures them together,
  // on one series of the ledger.
  perf::ReturnsRequest year_request;
  year_request.account = request.account;
  year_request.period.year = request.year;
  year_request.benchmark = request.benchmark;
  year_request.currency = translated_to;
  const perf::ResolvedPeriod resolved = perf::resolve(data, year_request);
  const Date to = resolved.period.to;
  const market::DayView view(db);
  std::vector<perf::ReturnsRequest> requests{year_request};
  // Each line of the table: a label and the request measuring it, or a line
  // that cannot be measured.
  std::vector<std::pair<std::string, std::optional<std::size_t>>> lines{{"this year", 0}};
  std::vector<PerformanceLine> unavailable;
  auto measure = [&](const std::string& label, Date from) {
    perf::ReturnsRequest rq;
    rq.account = request.account;
    rq.period.from = from;
    rq.period.to = to;
    rq.as_of = to;
    rq.currency = translated_to;
    if (request.benchmark && priced_by(view, *request.benchmark, from.plus_days(-1)))
      rq.benchmark = request.benchmark;
    lines.emplace_back(label, requests.size());
    requests.push_back(rq);
  };
  measure("since inception", resolved.inception);
  for (const int n : kTrailingYears) {
    const Date from = to.plus_years(-n).plus_days(1);
    if (from < resolved.inception) {
      PerformanceLine line;
      line.label = fmt::format("{} years", n);
      line.from = from;
      line.to = to;
      line.unavailable_reason = fmt::format("the ledger starts on {}, less than {} years before {}",
                                            resolved.inception.str(), n, to.str());
      lines.emplace_back(line.label, std::nullopt);
      unavailable.push_back(std::move(line));
    } else {
      measure(fmt::format("{} years", n), from);
    }
  }
  // The replay that builds the series also keeps the books the holdings and
  // gains below need: at the close of the day before the year and of its end.
  const Date before = resolved.period.from.plus_days(-1);
  auto measured = perf::returns_reports(db, data, request.account, requests, {before, to});
  const auto& reports = measured.reports;
  std::size_t next_unavailable = 0;
  for (const auto& [label, index] : lines) {
    if (!index) {
      s.performance.push_back(std::move(unavailable[next_unavailable++]));
      continue;
    }
    auto line = line_from(label, reports[*index]);
    const auto& asked = requests[*index];
    if (request.benchmark && !asked.benchmark)
      line.benchmark_note = fmt::format("{} has no close before {}", printable(*request.benchmark),
                                        asked.period.from->str());
    s.performance.push_back(std::move(line));
  }

  const perf::ReturnsReport& year = reports.front();
  const perf::PerfResult& r = year.result;
  s.scope = year.scope;
  s.from = r.from;
  s.to = r.to;
  s.as_of = year.as_of;
  s.inception = year.inception;
  s.partial_year = s.to < Date::from_ymd(request.year, 12, 31);
  s.started_in_year = year.period.clamped;
  s.benchmark = year.benchmark;
  s.unpriced = year.unpriced;
  s.long_term_rule =
      request.long_term_days
          ? fmt::format("long-term: held more than {} days", *request.long_term_days)
          : std::string("long-term: disposed of after the first anniversary of acquisition");
  s.twr_mwr_words = twr_mwr_words(s.performance.front());

  for (const auto& m : r.months) s.months.push_back({m.month, m.complete, m.twr, m.benchmark});
  s.growth = portfolio_growth(r);
  if (s.benchmark) s.benchmark_growth = benchmark_growth(db, *s.benchmark, s.from, s.to);

  // Holdings at the close of the day before the period and of its last day;
  // the parts realized and the cost basis moved by then.
  auto opening = ledger::holdings_of(measured.books[0], view, before, account_id, translated_to);
  const Book& book = measured.books[1];
  auto closing = ledger::holdings_of(book, view, s.to, account_id, translated_to);
  cost_in_reporting(opening, currency_of_account, s.currency, view);
  cost_in_reporting(closing, currency_of_account, s.currency, view);
  s.holdings_total = closing.total_value;
  s.cash = closing.cash;
  std::map<std::string, Decimal> by_symbol;
  for (const auto& p : closing.positions) {
    s.holdings.push_back({p, weight_of(p.market_value, closing.total_value)});
    by_symbol[p.symbol] += p.market_value;
  }
  for (const auto& [symbol, value] : by_symbol)
    s.allocation.push_back({symbol, value, weight_of(value, closing.total_value)});
  std::sort(s.allocation.begin(), s.allocation.end(),
            [](const auto& a, const auto& b) { return a.value > b.value; });
  Decimal cash_total;
  for (const auto& c : closing.cash) cash_total += c.worth();
  s.allocation.push_back({"cash", cash_total, weight_of(cash_total, closing.total_value)});

  // Realized gains: the lot engine's parts disposed in the period; those of
  // accounts not taxable that day are listed apart.
  const auto statuses = ledger::TaxStatuses::load(db);
  Decimal sheltered_gain;
  for (auto& g : ledger::realized_gains_of(book, view, statuses, request.year, account_id,
                                           request.long_term_days, translated_to)) {
    if (g.part.disposed < s.from || g.part.disposed > s.to) continue;
    if (g.taxable()) {
      s.gains.push_back(std::move(g));
      continue;
    }
    sheltered_gain += g.part.gain();
    s.not_taxable.push_back({g.account, std::string(to_string(g.tax_status)), g.part.disposed,
                             "sale", g.symbol, g.part.gain(), Decimal()});
  }
  s.realized_totals = ledger::totals_by_term(s.gains);

  // Transactions of the period in scope: flows, income, tax and fees.
  const LedgerLog& log = data.log;
  const auto voided = voided_ids(log.transactions);
  std::map<std::int64_t, std::string> symbols = data.symbols, account_names;
  for (const auto& a : accounts) account_names[a.id] = a.name;
  std::vector<const Transaction*> live;
  for (const auto& t : log.transactions) {
    if (t.kind == TxnKind::void_entry || voided.count(t.id)) continue;
    if (t.date < s.from || t.date > s.to) continue;
    if (account_id && t.account_id != *account_id) continue;
    live.push_back(&t);
  }
  std::sort(live.begin(), live.end(), [](const Transaction* a, const Transaction* b) {
    return a->date != b->date ? a->date < b->date : a->id < b->id;
  });
  std::map<std::int64_t, std::string> account_currency;
  for (const auto& a : accounts) account_currency[a.id] = a.currency;
  // A row's amount as the lot engine booked it in its account's currency,
  // translated into the reporting one at the rate of its day when the account
  // keeps another; `rate` says how the last step was taken.
  struct Reported {
    Decimal amount;
    std::optional<RateUsed> rate;
    std::optional<RateUsed> translated;  // the second step of a payment in a third currency
  };
  auto booked = [&](const Transaction& t, const Decimal& amount) {
    const std::string& own = account_currency.at(t.account_id);
    try {
      const auto b =
          ledger::booked_amount(amount, t.currency.value_or(own), t.rate, own, t.date, view);
      Reported out{b.amount, std::nullopt, std::nullopt};
      if (b.converted()) out.rate = RateUsed{*t.currency, amount, b.row_rate, b.day_rate};
      if (own != s.currency) {
        out.amount = view.convert(b.amount, own, s.currency, t.date);
        if (out.rate)  // the second step: reporting units per unit of the account's
          out.translated =
              RateUsed{own, b.amount, std::nullopt, view.rate(own, s.currency, t.date)};
        else
          out.rate = RateUsed{own, b.amount, std::nullopt, view.rate(s.currency, own, t.date)};
      }
      return out;
    } catch (const InputError& e) {
      throw InputError(fmt::format("statement: transaction {} ({} on {}): {}", t.id,
                                   to_string(t.kind), t.date.str(), e.what()));
    }
  };
  YearSummary& y = s.summary;
  Decimal cash_moved;  // cash transfers in minus out, internal pairs included
  // Deposits and withdrawals as the returns count them (at the day's rate),
  // so that what is left of their flows is the transfers.
  Decimal deposits_at_day_rate, withdrawals_at_day_rate;
  auto at_day_rate = [&](const Transaction& t) {
    const std::string& own = account_currency.at(t.account_id);
    return view.convert(*t.amount, t.currency.value_or(own), s.currency, t.date);
  };
  // Foreign cash moved by transfers: its lots' cost, by transaction; and the
  // transfers out whose receiving half is live (an internal pair for the
  // whole ledger, as the returns count them).
  std::map<std::int64_t, Decimal> fx_cash_cost;
  for (const auto& m : book.fx_cash_moved()) fx_cash_cost[m.txn_id] = m.cost;
  std::set<std::int64_t> paired_out;
  for (const auto& t : log.transactions)
    if (t.kind == TxnKind::transfer_in && t.link_id && !voided.count(t.id))
      paired_out.insert(*t.link_id);
  Decimal revalued_in, revalued_out;  // worth less cost of foreign cash transferred
  std::vector<const Transaction*> taxes;
  for (const Transaction* t : live) {
    const std::string symbol = t->security_id ? symbols[*t->security_id] : std::string();
    const TaxStatus status = statuses.on(t->account_id, t->date);
    const bool taxable = status == TaxStatus::taxable;
    switch (t->kind) {
      case TxnKind::deposit:
        y.deposits += booked(*t, *t->amount).amount;
        deposits_at_day_rate += at_day_rate(*t);
        break;
      case TxnKind::withdrawal:
        y.withdrawals += booked(*t, *t->amount).amount;
        withdrawals_at_day_rate += at_day_rate(*t);
        break;
      case TxnKind::dividend:
      case TxnKind::interest: {
        const auto gross = booked(*t, *t->amount);
        (t->kind == TxnKind::dividend ? y.dividends : y.interest) += gross.amount;
        if (taxable)
          s.income.push_back({account_names[t->account_id], t->date,
                              std::string(to_string(t->kind)), symbol, gross.amount, Decimal(),
                              gross.rate, gross.translated});
        else
          s.not_taxable.push_back({account_names[t->account_id], std::string(to_string(status)),
                                   t->date, std::string(to_string(t->kind)), symbol, gross.amount,
                                   Decimal()});
        break;
      }
      case TxnKind::tax:
        y.withholding += booked(*t, *t->amount).amount;
        taxes.push_back(t);
        break;
      case TxnKind::fee:
        y.fees += booked(*t, *t->amount).amount;
        break;
      case TxnKind::buy:
      case TxnKind::sell:
        y.trade_fees += booked(*t, t->fee).amount;
        break;
      case TxnKind::transfer_in:
      case TxnKind::transfer_out: {
        // The lot engine charges a transfer's fee to cash only when units move.
        if (t->security_id) {
          y.fees += booked(*t, t->fee).amount;
          break;
        }
        const bool in = t->kind == TxnKind::transfer_in;
        Decimal moved = at_day_rate(*t);
        // Foreign cash moves with its lots at their cost, so a mere transfer
        // shows no currency gain; where the returns count it as a flow (at
        // its worth that day), the transfer line takes the cost instead.
        if (const auto it = fx_cash_cost.find(t->id); it != fx_cash_cost.end()) {
          const Decimal cost =
              view.convert(it->second, account_currency.at(t->account_id), s.currency, t->date);
          const bool flow = account_id || !(in ? t->link_id && paired_out.count(*t->link_id)
                                               : paired_out.count(t->id));
          if (flow) (in ? revalued_in : revalued_out) += moved - cost;
          moved = cost;
        }
        cash_moved += in ? moved : -moved;
        break;
      }
      case TxnKind::exchange:  // no flow: cash changes currency inside the account
      case TxnKind::void_entry:
        break;
    }
  }
  for (const Transaction* t : taxes) {
    const Decimal amount = booked(*t, *t->amount).amount;
    const std::string account = account_names[t->account_id];
    const std::string symbol = t->security_id ? symbols[*t->security_id] : std::string();
    const TaxStatus status = statuses.on(t->account_id, t->date);
    if (status != TaxStatus::taxable) {
      auto it = std::find_if(s.not_taxable.begin(), s.not_taxable.end(), [&](const auto& row) {
        return (row.kind == "dividend" || row.kind == "interest") && row.account == account &&
               row.day == t->date && row.symbol == symbol;
      });
      if (it != s.not_taxable.end())
        it->withheld += amount;
      else
        s.not_taxable.push_back(
            {account, std::string(to_string(status)), t->date, "tax", symbol, amount, Decimal()});
      continue;
    }
    auto it = std::find_if(s.income.begin(), s.income.end(), [&](const IncomeRow& row) {
      return row.account == account && row.day == t->date && row.symbol == symbol;
    });
    if (it != s.income.end())
      it->withheld += amount;
    else
      s.other_tax.push_back({account, t->date, symbol, amount});
  }
  std::stable_sort(s.not_taxable.begin(), s.not_taxable.end(),
                   [](const NotTaxableRow& a, const NotTaxableRow& b) { return a.day < b.day; });
  s.withholding =
      ledger::withholding_of(log, view, statuses, request.year, account_id, translated_to);

  // Value pieces: the holdings' values (each position and each cash
  // currency converted on its own, as the unrealized gains are, so that a
  // cent of rounding cannot come between them), the returns module's
  // external flows, the lot engine's realized gains and the cost basis moved
  // by transfers.
  y.opening_value = opening.total_value;
  y.closing_value = closing.total_value;
  y.transfers_in = r.inflow - deposits_at_day_rate - revalued_in;
  y.transfers_out = r.outflow - withdrawals_at_day_rate - revalued_out;
  y.realized_gain = s.realized_totals.all().gain + sheltered_gain;
  y.unrealized_opening = unrealized_total(opening);
  y.unrealized_closing = unrealized_total(closing);
  Decimal cost_moved;
  for (const auto& m : book.moved()) {
    if (m.date < s.from || (account_id && m.account_id != *account_id)) continue;
    const std::string& own = account_currency.at(m.account_id);
    const Decimal cost = view.convert(m.cost, own, s.currency, m.date);
    cost_moved += m.incoming ? cost : -cost;
  }
  // What transfers added at market value, less the cash and cost basis they
  // brought, is unrealized gain that arrived with the units (not earned here).
  y.unrealized_moved = (y.transfers_in - y.transfers_out) - cash_moved - cost_moved;

  // Foreign cash: the currency gain its spending realized in the period, and
  // what it is worth over its cost at each end.
  for (auto g : book.fx_realized()) {
    if (g.disposed < s.from || g.disposed > s.to || (account_id && g.account_id != *account_id))
      continue;
    const std::string& own = account_currency.at(g.account_id);
    g.proceeds = view.convert(g.proceeds, own, s.currency, g.disposed);
    g.cost = view.convert(g.cost, own, s.currency, g.disposed);
    y.fx_cash_realized += g.gain();
    s.fx_cash_gains.push_back({account_names[g.account_id], g});
  }
  y.fx_cash_unrealized_opening = fx_cash_unrealized(opening);
  y.fx_cash_unrealized_closing = fx_cash_unrealized(closing);
  // What is left when accounts keep other currencies is translation; each
  // account's own statement keeps the check.
  if (s.translated) {
    Decimal own_checks;
    for (const auto& a : accounts) {
      if (account_id && a.id != *account_id) continue;
      StatementRequest own;
      own.year = request.year;
      own.account = a.name;
      own.long_term_days = request.long_term_days;
      // A difference of zero, the usual case, needs no rate.
      const Decimal d = build_statement(db, own).summary.difference();
      if (!d.is_zero()) own_checks += view.convert(d, a.currency, s.currency, s.to);
    }
    y.translation = y.difference() - own_checks;
  }
  s.foreign =
      s.translated || !s.fx_cash_gains.empty() ||
      std::any_of(s.holdings.begin(), s.holdings.end(),
                  [](const HoldingRow& h) { return h.line.rate.has_value(); }) ||
      std::any_of(s.cash.begin(), s.cash.end(),
                  [](const ledger::CashLine& c) { return !c.currency.empty(); }) ||
      std::any_of(s.gains.begin(), s.gains.end(),
                  [](const ledger::GainLine& g) { return g.part.local_cost.has_value(); }) ||
      std::any_of(s.income.begin(), s.income.end(),
                  [](const IncomeRow& i) { return i.converted.has_value(); });

  s.cautions = statement_cautions();
  return s;
}

}  // namespace keel::report
