// The statement as JSON for scripts: decimals as exact strings, returns as
// fractions (numbers), absent figures as null.
#include "core/json.h"
#include "report/json_schema.h"
#include "report/statement_forms.h"

namespace keel::report {
namespace {

void totals(JsonWriter& j, const char* name, const ledger::GainTotals& t) {
  j.key(name).begin_object().member("parts", t.parts).member("proceeds", t.proceeds);
  j.member("cost", t.cost).member("gain", t.gain).end_object();
}

// A symbol, or null for none.
void symbol(JsonWriter& j, const std::string& s) {
  j.key("symbol");
  if (s.empty())
    j.null();
  else
    j.value(s);
}

// A stored rate as used (as keel holdings writes it), or null.
void quote(JsonWriter& j, const char* name, const std::optional<market::FxQuote>& q) {
  j.key(name);
  if (!q) {
    j.null();
    return;
  }
  j.begin_object().member("pair", q->base + "/" + q->quote);
  j.member("rate", q->rate).member("day", q->day.str());
  j.member("derived", q->how == market::FxHow::direct ? "" : q->describe()).end_object();
}

// A currency code, or null for the reporting currency itself.
void currency(JsonWriter& j, const std::string& code) {
  j.key("currency");
  if (code.empty())
    j.null();
  else
    j.value(code);
}

}  // namespace

std::string statement_json(const Statement& s) {
  std::string text;
  JsonWriter j(text);
  begin_document(j, "statement", 4);
  j.member("year", s.year).member("scope", s.scope).member("currency", s.currency);
  j.member("from", s.from.str()).member("to", s.to.str()).member("as_of", s.as_of.str());
  j.member("inception", s.inception.str()).member("partial_year", s.partial_year);
  j.member("benchmark", s.benchmark).member("long_term_rule", s.long_term_rule);
  j.member("unpriced", s.unpriced);
  j.key("reconciled").begin_array();
  for (const auto& [account, day] : s.reconciled)
    j.begin_object().member("account", account).member("day", day.str()).end_object();
  j.end_array();

  const YearSummary& y = s.summary;
  j.key("summary").begin_object();
  j.member("opening_value", y.opening_value).member("deposits", y.deposits);
  j.member("withdrawals", y.withdrawals).member("transfers_in", y.transfers_in);
  j.member("transfers_out", y.transfers_out).member("dividends", y.dividends);
  j.member("withholding", y.withholding).member("interest", y.interest);
  j.member("fees", y.fees).member("realized_gain", y.realized_gain);
  j.member("unrealized_opening", y.unrealized_opening);
  j.member("unrealized_closing", y.unrealized_closing);
  j.member("unrealized_change", y.unrealized_change());
  j.member("unrealized_moved", y.unrealized_moved).member("closing_value", y.closing_value);
  j.member("explained_closing", y.explained_closing()).member("difference", y.difference());
  j.member("trade_fees", y.trade_fees);
  j.member("fx_cash_realized", y.fx_cash_realized);
  j.member("fx_cash_unrealized_opening", y.fx_cash_unrealized_opening);
  j.member("fx_cash_unrealized_closing", y.fx_cash_unrealized_closing);
  j.member("fx_cash_unrealized_change", y.fx_cash_unrealized_change());
  j.member("translation", y.translation).member("translated", s.translated);
  j.end_object();

  j.key("performance").begin_array();
  for (const auto& p : s.performance) {
    j.begin_object().member("period", p.label).member("available", p.available);
    if (!p.available) {
      j.member("reason", p.unavailable_reason);
    } else {
      j.member("from", p.from.str()).member("to", p.to.str()).member("days", p.days);
      j.member("twr", p.twr).member("twr_annualized", p.twr_annualized);
      j.member("mwr", p.mwr_period).member("mwr_annualized", p.mwr_annualized);
      if (!p.mwr_note.empty()) j.member("mwr_note", p.mwr_note);
      j.member("benchmark", p.benchmark).member("benchmark_annualized", p.benchmark_annualized);
      j.member("excess", p.excess).member("excess_annualized", p.excess_annualized);
      if (!p.benchmark_note.empty()) j.member("benchmark_note", p.benchmark_note);
    }
    j.end_object();
  }
  j.end_array();
  j.key("twr_mwr_explanation");
  if (s.twr_mwr_words.empty())
    j.null();
  else
    j.value(s.twr_mwr_words);

  j.key("months").begin_array();
  for (const auto& m : s.months) {
    j.begin_object().member("month", m.month).member("complete", m.complete);
    j.member("twr", m.twr).member("benchmark", m.benchmark).end_object();
  }
  j.end_array();

  j.key("holdings").begin_array();
  for (const auto& h : s.holdings) {
    j.begin_object().member("account", h.line.account).member("symbol", h.line.symbol);
    j.member("quantity", h.line.quantity).member("cost_basis", h.line.cost_basis);
    j.member("price", h.line.price).member("price_is_close", h.line.price_is_close);
    j.member("market_value", h.line.market_value);
    j.member("unrealized_gain", h.line.unrealized_gain).member("weight", h.weight);
    currency(j, h.line.currency);
    quote(j, "rate", h.line.rate);
    j.key("local_value");
    if (h.line.rate)
      j.value(h.line.local_value);
    else
      j.null();
    j.end_object();
  }
  j.end_array();
  j.key("cash").begin_array();
  for (const auto& c : s.cash) {
    j.begin_object().member("account", c.account).member("amount", c.amount);
    currency(j, c.currency);
    quote(j, "rate", c.rate);
    j.member("value", c.worth());
    j.key("cost");
    if (c.currency.empty() || c.own)
      j.null();
    else
      j.value(c.cost);
    j.end_object();
  }
  j.end_array();
  j.member("holdings_total", s.holdings_total);

  j.key("realized").begin_array();
  for (const auto& g : s.gains) {
    j.begin_object().member("account", g.account).member("symbol", g.symbol);
    j.member("lot", static_cast<long long>(g.part.lot_id));
    j.member("acquired", g.part.acquired.str()).member("disposed", g.part.disposed.str());
    j.member("days_held", g.days_held).member("quantity", g.part.quantity);
    j.member("proceeds", g.part.proceeds).member("cost", g.part.cost);
    j.member("gain", g.part.gain()).member("class", g.long_term ? "long" : "short");
    j.member("local_proceeds", g.part.local_proceeds).member("local_cost", g.part.local_cost);
    j.member("price_part", g.part.price_part()).member("currency_part", g.part.currency_part());
    j.end_object();
  }
  j.end_array();
  j.key("realized_totals").begin_object();
  totals(j, "short", s.realized_totals.short_term);
  totals(j, "long", s.realized_totals.long_term);
  j.end_object();

  j.key("income").begin_array();
  for (const auto& r : s.income) {
    j.begin_object().member("account", r.account).member("date", r.day.str());
    j.member("kind", r.kind);
    symbol(j, r.symbol);
    j.member("gross", r.gross).member("withheld", r.withheld).member("net", r.net());
    j.key("converted");
    if (!r.converted) {
      j.null();
    } else {
      const RateUsed& u = *r.converted;
      j.begin_object().member("currency", u.currency).member("local_gross", u.local);
      j.member("rate", u.rate()).member("source", u.row_rate ? "row" : "stored");
      quote(j, "stored_rate", u.day);
      j.key("translated");
      if (!r.translated) {
        j.null();
      } else {
        const RateUsed& t = *r.translated;
        j.begin_object().member("currency", t.currency).member("booked_gross", t.local);
        j.member("rate", t.rate());
        quote(j, "stored_rate", t.day);
        j.end_object();
      }
      j.end_object();
    }
    j.end_object();
  }
  j.end_array();
  j.key("unmatched_tax").begin_array();
  for (const auto& t : s.other_tax) {
    j.begin_object().member("account", t.account).member("date", t.day.str());
    symbol(j, t.symbol);
    j.member("amount", t.amount).end_object();
  }
  j.end_array();
  j.key("not_taxable").begin_array();
  for (const auto& r : s.not_taxable) {
    j.begin_object().member("account", r.account).member("status", r.status);
    j.member("date", r.day.str()).member("kind", r.kind);
    symbol(j, r.symbol);
    j.member("amount", r.amount).member("withheld", r.withheld).end_object();
  }
  j.end_array();
  j.key("withholding").begin_object().key("by_security").begin_array();
  for (const auto& w : s.withholding.by_security) {
    j.begin_object();
    symbol(j, w.symbol);
    j.member("country", w.country).member("income", w.income).member("withheld", w.withheld);
    j.end_object();
  }
  j.end_array().key("by_country").begin_object();
  for (const auto& [country, amount] : s.withholding.by_country)
    j.member(country.empty() ? "unknown" : country, amount);
  j.end_object();
  j.member("total", s.withholding.total).member("not_taxable", s.withholding.not_taxable);
  j.end_object();
  j.key("fx_cash_gains").begin_array();
  for (const auto& g : s.fx_cash_gains) {
    j.begin_object().member("account", g.account).member("currency", g.part.currency);
    j.member("acquired", g.part.acquired.str()).member("disposed", g.part.disposed.str());
    j.member("amount", g.part.quantity).member("proceeds", g.part.proceeds);
    j.member("cost", g.part.cost).member("gain", g.part.gain()).end_object();
  }
  j.end_array();
  j.member("cautions", s.cautions);
  j.end_object();
  return text + "\n";
}

}  // namespace keel::report
