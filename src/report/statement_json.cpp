// The statement as JSON for scripts: decimals as exact strings, returns as
// fractions (numbers), absent figures as null.
#include "report/statement_forms.h"

namespace keel::report {
namespace {

using Json = nlohmann::ordered_json;

Json number(const std::optional<double>& x) {
  return x ? Json(*x) : Json();
}

}  // namespace

nlohmann::ordered_json statement_json(const Statement& s) {
  Json j;
  j["year"] = s.year;
  j["scope"] = s.scope;
  j["currency"] = s.currency;
  j["from"] = s.from.str();
  j["to"] = s.to.str();
  j["as_of"] = s.as_of.str();
  j["inception"] = s.inception.str();
  j["partial_year"] = s.partial_year;
  j["benchmark"] = s.benchmark ? Json(*s.benchmark) : Json();
  j["long_term_rule"] = s.long_term_rule;
  j["unpriced"] = s.unpriced;
  j["reconciled"] = Json::array();
  for (const auto& [account, day] : s.reconciled)
    j["reconciled"].push_back({{"account", account}, {"day", day.str()}});

  const YearSummary& y = s.summary;
  j["summary"] = {{"opening_value", y.opening_value.str()},
                  {"deposits", y.deposits.str()},
                  {"withdrawals", y.withdrawals.str()},
                  {"transfers_in", y.transfers_in.str()},
                  {"transfers_out", y.transfers_out.str()},
                  {"dividends", y.dividends.str()},
                  {"withholding", y.withholding.str()},
                  {"interest", y.interest.str()},
                  {"fees", y.fees.str()},
                  {"realized_gain", y.realized_gain.str()},
                  {"unrealized_opening", y.unrealized_opening.str()},
                  {"unrealized_closing", y.unrealized_closing.str()},
                  {"unrealized_change", y.unrealized_change().str()},
                  {"unrealized_moved", y.unrealized_moved.str()},
                  {"closing_value", y.closing_value.str()},
                  {"explained_closing", y.explained_closing().str()},
                  {"difference", y.difference().str()},
                  {"trade_fees", y.trade_fees.str()}};

  j["performance"] = Json::array();
  for (const auto& p : s.performance) {
    Json line{{"period", p.label}, {"available", p.available}};
    if (!p.available) {
      line["reason"] = p.unavailable_reason;
    } else {
      line["from"] = p.from.str();
      line["to"] = p.to.str();
      line["days"] = p.days;
      line["twr"] = number(p.twr);
      line["twr_annualized"] = number(p.twr_annualized);
      line["mwr"] = number(p.mwr_period);
      line["mwr_annualized"] = number(p.mwr_annualized);
      if (!p.mwr_note.empty()) line["mwr_note"] = p.mwr_note;
      line["benchmark"] = number(p.benchmark);
      line["benchmark_annualized"] = number(p.benchmark_annualized);
      line["excess"] = number(p.excess);
      line["excess_annualized"] = number(p.excess_annualized);
      if (!p.benchmark_note.empty()) line["benchmark_note"] = p.benchmark_note;
    }
    j["performance"].push_back(std::move(line));
  }
  j["twr_mwr_explanation"] = s.twr_mwr_words.empty() ? Json() : Json(s.twr_mwr_words);

  j["months"] = Json::array();
  for (const auto& m : s.months)
    j["months"].push_back({{"month", m.month},
                           {"complete", m.complete},
                           {"twr", m.twr},
                           {"benchmark", number(m.benchmark)}});

  j["holdings"] = Json::array();
  for (const auto& h : s.holdings)
    j["holdings"].push_back({{"account", h.line.account},
                             {"symbol", h.line.symbol},
                             {"quantity", h.line.quantity.str()},
                             {"cost_basis", h.line.cost_basis.str()},
                             {"price", h.line.price.str()},
                             {"price_is_close", h.line.price_is_close},
                             {"market_value", h.line.market_value.str()},
                             {"unrealized_gain", h.line.unrealized_gain.str()},
                             {"weight", h.weight.str()}});
  j["cash"] = Json::array();
  for (const auto& c : s.cash)
    j["cash"].push_back({{"account", c.account}, {"amount", c.amount.str()}});
  j["holdings_total"] = s.holdings_total.str();

  j["realized"] = Json::array();
  for (const auto& g : s.gains) {
    j["realized"].push_back({{"account", g.account},
                             {"symbol", g.symbol},
                             {"lot", g.part.lot_id},
                             {"acquired", g.part.acquired.str()},
                             {"disposed", g.part.disposed.str()},
                             {"days_held", g.days_held},
                             {"quantity", g.part.quantity.str()},
                             {"proceeds", g.part.proceeds.str()},
                             {"cost", g.part.cost.str()},
                             {"gain", g.part.gain().str()},
                             {"class", g.long_term ? "long" : "short"}});
  }
  auto totals = [](const ledger::GainTotals& t) {
    return Json{{"parts", t.parts},
                {"proceeds", t.proceeds.str()},
                {"cost", t.cost.str()},
                {"gain", t.gain.str()}};
  };
  j["realized_totals"] = {{"short", totals(s.realized_totals.short_term)},
                          {"long", totals(s.realized_totals.long_term)}};

  j["income"] = Json::array();
  for (const auto& r : s.income)
    j["income"].push_back({{"account", r.account},
                           {"date", r.day.str()},
                           {"kind", r.kind},
                           {"symbol", r.symbol.empty() ? Json() : Json(r.symbol)},
                           {"gross", r.gross.str()},
                           {"withheld", r.withheld.str()},
                           {"net", r.net().str()}});
  j["unmatched_tax"] = Json::array();
  for (const auto& t : s.other_tax)
    j["unmatched_tax"].push_back({{"account", t.account},
                                  {"date", t.day.str()},
                                  {"symbol", t.symbol.empty() ? Json() : Json(t.symbol)},
                                  {"amount", t.amount.str()}});
  j["not_taxable"] = Json::array();
  for (const auto& r : s.not_taxable)
    j["not_taxable"].push_back({{"account", r.account},
                                {"status", r.status},
                                {"date", r.day.str()},
                                {"kind", r.kind},
                                {"symbol", r.symbol.empty() ? Json() : Json(r.symbol)},
                                {"amount", r.amount.str()},
                                {"withheld", r.withheld.str()}});
  Json by_security = Json::array();
  for (const auto& w : s.withholding.by_security)
    by_security.push_back({{"symbol", w.symbol.empty() ? Json() : Json(w.symbol)},
                           {"country", w.country ? Json(*w.country) : Json()},
                           {"income", w.income.str()},
                           {"withheld", w.withheld.str()}});
  Json by_country = Json::object();
  for (const auto& [country, amount] : s.withholding.by_country)
    by_country[country.empty() ? "unknown" : country] = amount.str();
  j["withholding"] = {{"by_security", by_security},
                      {"by_country", by_country},
                      {"total", s.withholding.total.str()},
                      {"not_taxable", s.withholding.not_taxable.str()}};
  j["cautions"] = s.cautions;
  return j;
}

}  // namespace keel::report
