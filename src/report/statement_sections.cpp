// The statement as tables, one per section: the single source of every form.
#include <fmt/format.h>

#include <algorithm>

#include "report/gain_rows.h"
#include "report/statement_forms.h"

namespace keel::report {

namespace {

using C = Cell;

Section summary_section(const Statement& s) {
  const YearSummary& y = s.summary;
  Section sec;
  sec.key = "summary";
  sec.title = "The year in one table";
  sec.columns = {{"item"}, {"amount", Align::right}};
  auto row = [&](std::string label, const Decimal& amount) {
    sec.rows.push_back({C::of_text(std::move(label)), C::of_money(amount)});
  };
  row(fmt::format("opening value (close of {})", s.from.plus_days(-1).str()), y.opening_value);
  row("deposits", y.deposits);
  row("withdrawals", -y.withdrawals);
  row("transfers in (at market value)", y.transfers_in);
  row("transfers out (at market value)", -y.transfers_out);
  row("dividends, gross", y.dividends);
  row("withholding and other tax", -y.withholding);
  row("interest", y.interest);
  row("fees (fee entries, transfer fees)", -y.fees);
  row("realized gain", y.realized_gain);
  row("change in unrealized gain", y.unrealized_change());
  row("unrealized gain moved in by transfers", -y.unrealized_moved);
  if (s.foreign) {
    row("currency gain on foreign cash, realized", y.fx_cash_realized);
    row("change in unrealized currency gain on foreign cash", y.fx_cash_unrealized_change());
  }
  if (s.translated)
    row(fmt::format("translation into {} (rates moved)", s.currency), y.translation);
  const std::size_t explained = sec.rows.size();
  sec.emphasised.push_back(explained);
  row("opening value plus the pieces", y.explained_closing());
  row(fmt::format("closing value (close of {})", s.to.str()), y.closing_value);
  row("difference", y.difference());
  sec.formulas = {Formula::sum(explained, 1, 0, explained - 1),
                  Formula::difference(explained + 2, 1, explained + 1, explained)};
  sec.notes.push_back(
      y.difference().is_zero()
          ? "Check: the pieces add up to the closing value exactly."
          : fmt::format("Check FAILED: the pieces miss the closing value by {}; the ledger and "
                        "its prices disagree somewhere. Please report it.",
                        y.difference().str()));
  sec.notes.push_back(fmt::format(
      "Trade fees of {} are inside the cost basis and the realized gain above; they are not "
      "subtracted again.",
      y.trade_fees.fixed(2)));
  sec.notes.push_back(fmt::format("Unrealized gain: {} at the start, {} at the end.",
                                  y.unrealized_opening.fixed(2), y.unrealized_closing.fixed(2)));
  if (s.translated)
    sec.notes.push_back(fmt::format(
        "Every figure is in {}, translated from each account's own currency: a row at the rate "
        "of its day, a value at the rate of the day valued, a lot's cost at the rate of its "
        "acquisition day. Translation is what is left: the change in the {} worth of what each "
        "account keeps in its own currency. Foreign cash's currency gain ({} at the start, {} at "
        "the end, unrealized) is shown apart from price gains.",
        s.currency, s.currency, y.fx_cash_unrealized_opening.fixed(2),
        y.fx_cash_unrealized_closing.fixed(2)));
  else if (s.foreign)
    sec.notes.push_back(fmt::format(
        "Every figure is in {}. Foreign cash is carried at its cost in {}; its currency gain is "
        "shown apart from price gains ({} at the start, {} at the end, unrealized).",
        s.currency, s.currency, y.fx_cash_unrealized_opening.fixed(2),
        y.fx_cash_unrealized_closing.fixed(2)));
  return sec;
}

Section performance_section(const Statement& s) {
  Section sec;
  sec.key = "performance";
  sec.title = "Performance";
  sec.columns = {{"figure"}};
  for (const auto& p : s.performance) sec.columns.push_back({p.label, Align::right});
  auto row = [&](std::string label, auto cell_of) {
    std::vector<Cell> cells{C::of_text(std::move(label))};
    for (const auto& p : s.performance) cells.push_back(p.available ? cell_of(p) : C::none());
    sec.rows.push_back(std::move(cells));
  };
  row("from", [](const PerformanceLine& p) { return C::of_date(p.from); });
  row("days", [](const PerformanceLine& p) { return C::of_integer(p.days); });
  row("time-weighted", [](const PerformanceLine& p) { return C::of_percent(p.twr); });
  row("time-weighted, a year",
      [](const PerformanceLine& p) { return C::of_percent(p.twr_annualized); });
  row("money-weighted", [](const PerformanceLine& p) { return C::of_percent(p.mwr_period); });
  row("money-weighted, a year",
      [](const PerformanceLine& p) { return C::of_percent(p.mwr_annualized); });
  if (s.benchmark) {
    row("benchmark " + *s.benchmark,
        [](const PerformanceLine& p) { return C::of_percent(p.benchmark); });
    row("benchmark, a year",
        [](const PerformanceLine& p) { return C::of_percent(p.benchmark_annualized); });
    row("excess over benchmark", [](const PerformanceLine& p) { return C::of_percent(p.excess); });
    row("excess, a year",
        [](const PerformanceLine& p) { return C::of_percent(p.excess_annualized); });
  }
  for (const auto& p : s.performance) {
    if (!p.available) sec.notes.push_back(fmt::format("{}: {}.", p.label, p.unavailable_reason));
    if (p.available && !p.mwr_note.empty())
      sec.notes.push_back(fmt::format("{}: {}.", p.label, p.mwr_note));
    if (p.available && !p.benchmark_note.empty())
      sec.notes.push_back(fmt::format("{}: no benchmark figure, {}.", p.label, p.benchmark_note));
  }
  sec.notes.push_back(
      "Returns of periods shorter than a year are not annualized. Excess is the time-weighted "
      "return minus the benchmark's.");
  if (!s.twr_mwr_words.empty()) sec.notes.push_back(s.twr_mwr_words);
  return sec;
}

const char* const kMonthNames[] = {"Jan", "Feb", "Mar", "Apr", "May", "Jun",
                                   "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"};

Section monthly_section(const Statement& s) {
  Section sec;
  sec.key = "monthly";
  sec.title = "Monthly returns (time-weighted)";
  sec.columns = {{"month"}, {"portfolio", Align::right}};
  if (s.benchmark)
    sec.columns.insert(sec.columns.end(),
                       {{"benchmark", Align::right}, {"difference", Align::right}});
  bool partial = false;
  for (const auto& m : s.months) {
    partial |= !m.complete;
    std::vector<Cell> cells{
        C::of_text(fmt::format("{} {}{}", kMonthNames[m.month - 1], s.year, m.complete ? "" : "*")),
        C::of_percent(m.twr)};
    if (s.benchmark) {
      cells.push_back(C::of_percent(m.benchmark));
      cells.push_back(
          C::of_percent(m.benchmark ? std::optional<double>(m.twr - *m.benchmark) : std::nullopt));
    }
    sec.rows.push_back(std::move(cells));
  }
  const auto& year = s.performance.front();
  sec.emphasised.push_back(sec.rows.size());
  std::vector<Cell> total{C::of_text("the year"), C::of_percent(year.twr)};
  if (s.benchmark) {
    total.push_back(C::of_percent(year.benchmark));
    total.push_back(C::of_percent(year.excess));
  }
  sec.rows.push_back(std::move(total));
  if (partial) sec.notes.push_back("* only part of the month lies in the statement's period.");
  return sec;
}

Section holdings_section(const Statement& s) {
  Section sec;
  sec.key = "holdings";
  sec.title = fmt::format("Holdings at the close of {}", s.to.str());
  // At a narrow terminal the price makes way first, then the weight, then
  // the cost basis; the account name shortens before any of them.
  sec.columns = {{"account", Align::left, true},    {"symbol"},
                 {"quantity", Align::right},        {"cost basis", Align::right, false, 1},
                 {"price", Align::right, false, 3}, {"value", Align::right},
                 {"unrealized", Align::right},      {"weight", Align::right, false, 2}};
  // With other currencies, the price is local: its currency and the rate
  // used stand beside it (and the value is converted).
  const std::size_t extra = s.foreign ? 2 : 0;
  if (s.foreign)
    sec.columns.insert(sec.columns.begin() + 5,
                       {{"currency", Align::left, false, 4}, {"rate", Align::right, false, 5}});
  std::vector<std::string> rates;
  auto with_rate = [&](std::vector<Cell> cells, const std::string& currency,
                       const std::optional<market::FxQuote>& rate) {
    if (!s.foreign) return cells;
    // A line in the reporting currency itself needs no rate.
    const bool same = rate && rate->how == market::FxHow::same;
    cells.insert(cells.begin() + 5, {C::of_text(currency.empty() ? s.currency : currency),
                                     rate && !same ? C::of_quantity(rate->rate) : C::none()});
    if (rate && !same && std::find(rates.begin(), rates.end(), rate->describe()) == rates.end())
      rates.push_back(rate->describe());
    return cells;
  };
  bool trade_price = false;
  Decimal cost, value, unrealized;
  for (const auto& h : s.holdings) {
    const auto& p = h.line;
    trade_price |= !p.price_is_close;
    sec.rows.push_back(with_rate(
        {C::of_text(p.account), C::of_text(p.symbol + (p.price_is_close ? "" : "*")),
         C::of_quantity(p.quantity), C::of_money(p.cost_basis), C::of_quantity(p.price),
         C::of_money(p.market_value), C::of_money(p.unrealized_gain), C::of_percent(h.weight)},
        p.currency, p.rate));
    cost += p.cost_basis;
    value += p.market_value;
    unrealized += p.unrealized_gain;
  }
  for (const auto& c : s.cash) {
    const Decimal w =
        s.holdings_total.is_zero() ? Decimal() : Decimal::divide(c.worth(), s.holdings_total, 6);
    sec.rows.push_back(
        with_rate({C::of_text(c.account), C::of_text("cash"),
                   c.currency.empty() ? C::none() : C::of_quantity(c.amount), C::none(), C::none(),
                   C::of_money(c.worth()), C::none(), C::of_percent(w)},
                  c.currency, c.rate));
  }
  const std::size_t total_row = sec.rows.size();
  sec.emphasised.push_back(total_row);
  sec.rows.push_back(
      with_rate({C::of_text("total"), C::none(), C::none(), C::of_money(cost), C::none(),
                 C::of_money(s.holdings_total), C::of_money(unrealized), C::none()},
                s.currency, std::nullopt));
  if (s.foreign) sec.rows.back()[5] = C::none();
  if (total_row > 0)
    for (const std::size_t column : {std::size_t{3}, 5 + extra, 6 + extra})
      sec.formulas.push_back(Formula::sum(total_row, column, 0, total_row - 1));
  if (s.foreign) {
    sec.notes.push_back(fmt::format(
        "Prices are in each security's currency; values are in {} at the rate beside them "
        "(units of that currency per {}), the latest stored on or before {}. Cash in another "
        "currency shows its amount under quantity.",
        s.currency, s.currency, s.to.str()));
    for (const auto& r : rates) sec.notes.push_back("Converted at " + r + ".");
  }
  if (trade_price)
    sec.notes.push_back(
        "* no close on or before the day; valued at the ledger's last trade price.");
  if (!s.unpriced.empty())
    sec.notes.push_back(fmt::format("Held without any close or trade price, valued at zero: {}.",
                                    fmt::join(s.unpriced, ", ")));
  for (const auto& [account, day] : s.reconciled)
    sec.notes.push_back(fmt::format("'{}' was last reconciled with its broker's statement on {}.",
                                    account, day.str()));
  return sec;
}

Section gains_section(const Statement& s) {
  Section sec;
  sec.key = "realized";
  sec.title = "Realized gains, by closed lot";
  sec.columns = gain_columns("class");
  for (const auto& g : s.gains) sec.rows.push_back(gain_cells(g));
  const std::size_t parts = sec.rows.size();
  sec.emphasised.push_back(parts);
  // Proceeds, cost and gain: the columns before the class, the last one.
  const std::size_t term = sec.columns.size() - 1;
  if (parts > 0)
    for (const std::size_t column : {term - 3, term - 2, term - 1}) {
      sec.formulas.push_back(Formula::sum_if(parts, column, 0, parts - 1, term, "short"));
      sec.formulas.push_back(Formula::sum_if(parts + 1, column, 0, parts - 1, term, "long"));
      sec.formulas.push_back(Formula::sum(parts + 2, column, 0, parts - 1));
    }
  auto total = [&](const char* label, const ledger::GainTotals& t, const char* cls) {
    sec.rows.push_back({C::of_text(label), C::none(), C::none(), C::none(), C::none(), C::none(),
                        C::of_money(t.proceeds), C::of_money(t.cost), C::of_money(t.gain),
                        C::of_text(cls)});
  };
  total("total short-term", s.realized_totals.short_term, "short");
  total("total long-term", s.realized_totals.long_term, "long");
  total("total", s.realized_totals.all(), "");
  sec.notes.push_back(
      fmt::format("Holding period: {}; otherwise short-term. Proceeds are net of "
                  "the sell's fee; cost includes the buy's fee.",
                  s.long_term_rule));
  if (s.gains.empty()) sec.notes.push_back("Nothing was sold in the period.");
  if (std::any_of(s.not_taxable.begin(), s.not_taxable.end(),
                  [](const NotTaxableRow& r) { return r.kind == "sale"; }))
    sec.notes.push_back(
        "Sales in tax-deferred and tax-exempt accounts are listed apart, as not a taxable event "
        "here.");
  return sec;
}

Section not_taxable_section(const Statement& s) {
  Section sec;
  sec.key = "not_taxable";
  sec.title = "Not a taxable event here";
  sec.columns = {{"account", Align::left, true},
                 {"status"},
                 {"date"},
                 {"kind"},
                 {"symbol"},
                 {"gain or gross", Align::right},
                 {"withheld", Align::right}};
  for (const auto& r : s.not_taxable)
    sec.rows.push_back({C::of_text(r.account), C::of_text(r.status), C::of_date(r.day),
                        C::of_text(r.kind), C::of_text(r.symbol), C::of_money(r.amount),
                        r.kind == "tax" ? C::none() : C::of_money(r.withheld)});
  sec.notes.push_back(
      "Gains, income and tax of accounts that were tax-deferred or tax-exempt on the day. They "
      "count in the year's value above, not in the taxable lists; how withdrawals from such "
      "accounts are taxed depends on local rules.");
  return sec;
}

Section withholding_section(const Statement& s) {
  Section sec;
  sec.key = "withholding";
  sec.title = "Withholding by security and issuer country";
  sec.columns = {{"symbol"}, {"country"}, {"income", Align::right}, {"withheld", Align::right}};
  const auto& w = s.withholding;
  for (const auto& line : w.by_security)
    sec.rows.push_back({C::of_text(line.symbol.empty() ? "(no security)" : line.symbol),
                        C::of_text(line.country.value_or("unknown")), C::of_money(line.income),
                        C::of_money(line.withheld)});
  const std::size_t first_total = sec.rows.size();
  for (const auto& [country, amount] : w.by_country) {
    const std::string label = country.empty() ? "unknown" : country;
    if (first_total > 0)
      sec.formulas.push_back(Formula::sum_if(sec.rows.size(), 3, 0, first_total - 1, 1, label));
    sec.emphasised.push_back(sec.rows.size());
    sec.rows.push_back(
        {C::of_text("country total"), C::of_text(label), C::none(), C::of_money(amount)});
  }
  sec.emphasised.push_back(sec.rows.size());
  sec.rows.push_back({C::of_text("total"), C::none(), C::none(), C::of_money(w.total)});
  if (first_total > 0)
    sec.formulas.push_back(Formula::sum(sec.rows.size() - 1, 3, 0, first_total - 1));
  sec.notes.push_back(
      "Tax rows of taxable accounts, summed for a foreign tax credit where local rules allow "
      "one. The country is the issuer's, as given with 'keel security add --country'; "
      "'unknown' when none was given.");
  if (!w.not_taxable.is_zero())
    sec.notes.push_back(fmt::format(
        "Tax of {} was withheld in tax-deferred and tax-exempt accounts; it is not summed here.",
        w.not_taxable.fixed(2)));
  return sec;
}

Section income_section(const Statement& s) {
  Section sec;
  sec.key = "income";
  sec.title = "Income and withholding";
  sec.columns = {{"account", Align::left, true},
                 {"date"},
                 {"kind", Align::left, false, 1},
                 {"symbol"},
                 {"gross", Align::right},
                 {"withheld", Align::right},
                 {"net", Align::right}};
  Decimal gross, withheld;
  for (const auto& r : s.income) {
    sec.rows.push_back({C::of_text(r.account), C::of_date(r.day), C::of_text(r.kind),
                        C::of_text(r.symbol), C::of_money(r.gross), C::of_money(r.withheld),
                        C::of_money(r.net())});
    gross += r.gross;
    withheld += r.withheld;
  }
  for (const auto& t : s.other_tax) {
    sec.rows.push_back({C::of_text(t.account), C::of_date(t.day), C::of_text("tax, unmatched"),
                        C::of_text(t.symbol), C::none(), C::of_money(t.amount),
                        C::of_money(-t.amount)});
    withheld += t.amount;
  }
  const std::size_t total_row = sec.rows.size();
  sec.emphasised.push_back(total_row);
  sec.rows.push_back({C::of_text("total"), C::none(), C::none(), C::none(), C::of_money(gross),
                      C::of_money(withheld), C::of_money(gross - withheld)});
  if (total_row > 0)
    for (const std::size_t column : {4, 5, 6})
      sec.formulas.push_back(Formula::sum(total_row, column, 0, total_row - 1));
  sec.notes.push_back(
      "Withholding is the tax booked on the same day, in the same account, for the same security "
      "as the payment; tax rows without such a payment are listed as unmatched.");
  if (s.income.empty() && s.other_tax.empty())
    sec.notes.push_back("No dividends, interest or tax in the period.");
  return sec;
}

// Sales of securities in another currency: the local figures and the gain's
// price part and currency part (docs/methods-ledger.md).
Section gains_parts_section(const Statement& s) {
  Section sec;
  sec.key = "realized_currency";
  sec.title = "Realized gains in other currencies: price part and currency part";
  // At a narrow terminal the lot goes first, then the local figures: the
  // gain and its two parts stay.
  sec.columns = {{"account", Align::left, true},
                 {"symbol"},
                 {"lot", Align::right, false, 3},
                 {"disposed"},
                 {"proceeds, local", Align::right, false, 2},
                 {"cost, local", Align::right, false, 1},
                 {"gain", Align::right},
                 {"price part", Align::right},
                 {"currency part", Align::right}};
  for (const auto& g : s.gains) {
    if (!g.part.local_cost) continue;
    sec.rows.push_back({C::of_text(g.account), C::of_text(g.symbol), C::of_integer(g.part.lot_id),
                        C::of_date(g.part.disposed), C::of_quantity(*g.part.local_proceeds),
                        C::of_quantity(*g.part.local_cost), C::of_money(g.part.gain()),
                        C::of_money(g.part.price_part()), C::of_money(g.part.currency_part())});
  }
  const std::size_t total_row = sec.rows.size();
  Decimal gain, price;
  for (const auto& g : s.gains)
    if (g.part.local_cost) gain += g.part.gain(), price += g.part.price_part();
  sec.emphasised.push_back(total_row);
  sec.rows.push_back({C::of_text("total"), C::none(), C::none(), C::none(), C::none(), C::none(),
                      C::of_money(gain), C::of_money(price), C::of_money(gain - price)});
  for (const std::size_t column : {6, 7, 8})
    sec.formulas.push_back(Formula::sum(total_row, column, 0, total_row - 1));
  sec.notes.push_back(fmt::format(
      "Local figures are in the security's currency. The gain is in {}, as in the table above: "
      "its price part is the local gain at the sale's rate, its currency part the rest, what "
      "the move of the rate did to the cost.",
      s.currency));
  return sec;
}

// Payments in another currency: the amount in it and how it was converted.
Section income_conversion_section(const Statement& s) {
  Section sec;
  sec.key = "income_converted";
  sec.title = fmt::format("Income in other currencies, converted into {}", s.currency);
  sec.columns = {{"account", Align::left, true},
                 {"date"},
                 {"symbol"},
                 {"currency"},
                 {"gross, local", Align::right},
                 {"rate", Align::right},
                 {"rate from", Align::left, false, 1},
                 {"gross", Align::right}};
  for (const auto& r : s.income) {
    if (!r.converted) continue;
    const RateUsed& u = *r.converted;
    sec.rows.push_back({C::of_text(r.account), C::of_date(r.day), C::of_text(r.symbol),
                        C::of_text(u.currency), C::of_quantity(u.local), C::of_quantity(u.rate()),
                        C::of_text(u.source()), C::of_money(r.gross)});
  }
  sec.notes.push_back(fmt::format(
      "The rate is units of the payment's currency per {}: the rate given on the row when it "
      "has one (the payment settled in {}), else the latest stored rate on or before its day. "
      "Withholding is converted the same way, row by row.",
      s.currency, s.currency));
  return sec;
}

// Foreign cash: the currency gain realized when it was spent, and what it is
// worth over its cost while held.
Section fx_cash_section(const Statement& s) {
  Section sec;
  sec.key = "currency_gains";
  sec.title = "Currency gains on foreign cash";
  sec.columns = {{"account", Align::left, true},
                 {"currency"},
                 {"state"},
                 {"acquired", Align::left, false, 1},  // first to go at a narrow terminal
                 {"day"},
                 {"amount", Align::right},
                 {"worth", Align::right},
                 {"cost", Align::right},
                 {"gain", Align::right}};
  for (const auto& g : s.fx_cash_gains)
    sec.rows.push_back({C::of_text(g.account), C::of_text(g.part.currency), C::of_text("spent"),
                        C::of_date(g.part.acquired), C::of_date(g.part.disposed),
                        C::of_quantity(g.part.quantity), C::of_money(g.part.proceeds),
                        C::of_money(g.part.cost), C::of_money(g.part.gain())});
  for (const auto& c : s.cash) {
    if (c.currency.empty() || c.own) continue;
    sec.rows.push_back({C::of_text(c.account), C::of_text(c.currency), C::of_text("held"),
                        C::none(), C::of_date(s.to), C::of_quantity(c.amount), C::of_money(c.value),
                        C::of_money(c.cost), C::of_money(c.currency_gain())});
  }
  const std::size_t detail = sec.rows.size();
  const YearSummary& y = s.summary;
  sec.emphasised.push_back(detail);
  sec.rows.push_back({C::of_text("realized"), C::none(), C::of_text("spent"), C::none(), C::none(),
                      C::none(), C::none(), C::none(), C::of_money(y.fx_cash_realized)});
  sec.rows.push_back({C::of_text("unrealized"), C::none(), C::of_text("held"), C::none(), C::none(),
                      C::none(), C::none(), C::none(), C::of_money(y.fx_cash_unrealized_closing)});
  if (detail > 0) {
    sec.formulas.push_back(Formula::sum_if(detail, 8, 0, detail - 1, 2, "spent"));
    sec.formulas.push_back(Formula::sum_if(detail + 1, 8, 0, detail - 1, 2, "held"));
  }
  sec.notes.push_back(fmt::format(
      "Cash in another currency is carried at what it cost in {}. Spending it (a buy, a fee, a "
      "tax, a withdrawal, an exchange) realizes the difference between its worth that day and "
      "its cost; cash still held is worth its amount at the rate of {}. These are gains of the "
      "currency, not of any security.",
      s.currency, s.to.str()));
  return sec;
}

Section cautions_section(const Statement& s) {
  Section sec;
  sec.key = "cautions";
  sec.title = "Please note";
  sec.columns = {{"caution"}};
  for (const auto& c : s.cautions) sec.rows.push_back({C::of_text(c)});
  return sec;
}

}  // namespace

std::vector<Section> statement_sections(const Statement& s) {
  std::vector<Section> out{summary_section(s), performance_section(s), monthly_section(s),
                           holdings_section(s), gains_section(s)};
  if (std::any_of(s.gains.begin(), s.gains.end(),
                  [](const ledger::GainLine& g) { return g.part.local_cost.has_value(); }))
    out.push_back(gains_parts_section(s));
  out.push_back(income_section(s));
  // Shown only when the year has them, so a household of taxable accounts
  // without withholding keeps its short statement.
  if (!s.withholding.total.is_zero() || !s.withholding.not_taxable.is_zero())
    out.push_back(withholding_section(s));
  if (!s.not_taxable.empty()) out.push_back(not_taxable_section(s));
  if (std::any_of(s.income.begin(), s.income.end(),
                  [](const IncomeRow& r) { return r.converted.has_value(); }))
    out.push_back(income_conversion_section(s));
  if (!s.fx_cash_gains.empty() ||
      std::any_of(s.cash.begin(), s.cash.end(),
                  [](const ledger::CashLine& c) { return !c.currency.empty() && !c.own; }))
    out.push_back(fx_cash_section(s));
  out.push_back(cautions_section(s));
  return out;
}

}  // namespace keel::report
