// Inputs: a rule meeting the market data, built one way for `keel propose`,
// `keel backtest` and `keel signal` (every step and message lives here once).
//
// Contract
//  - Inputs(rule, view) resolves the universe (the rule's symbols; else every
//    stock of the ledger that is not a sleeve, or of the rule's sector; by
//    symbol) and the sleeves (in the rule's order) against view.securities(),
//    and checks that the rule's metric has stored figures. Problems are
//    InputErrors located at the rule key (Rule::fail):
//      scope.symbols, sleeve.symbol: no security 'X' in the ledger
//      scope.sector: no stock in the ledger has sector 'X' (sectors: A, B)
//      screen.metric: the ledger holds no figures for metric 'X'; then
//        "did you mean 'Y'?", or the stored metrics, or how to import some
//    and a universe of every stock in a ledger without any is refused too.
//  - The rule values in one currency: `currency` when given (the accounts'
//    or the ledger's), else the first sleeve's, else the one its universe
//    shares; a universe in several currencies with none of these is refused
//    at scope. Without conversion (Convert::no) keep_currency() then applies;
//    its note is in notes(). Checked after the universe and before the metric.
//  - With Convert::yes (a given currency required) names in other currencies
//    stay in: a name without an exchange rate into the rule's currency on a
//    day (View::try_rate) has no price that day, and the screen says which
//    pair and day; quotes() converts closes and trade prices at the day's
//    rate (QuoteFx), to kQuotePlaces; a held name without a rate is valued
//    at zero and never traded, with a note; a sleeve without one is refused.
//  - candidates(view, day, held): a universe name that a merger or delisting
//    took off the market on or before `day` (View::ended) is marked so, and
//    the screen leaves it out from that day.
//  - select(view, day, held): the engine's screen and targets on what the
//    view knew on `day` (rules/engine.h); held names outside the targets are
//    added as exits ("not in the rule's universe"). A day on which the rule
//    holds nothing is a normal result with its refusal. When the rule holds
//    something, every sleeve must have a close on or before the day
//    (InputError at sleeve.symbol otherwise).
//  - quotes(view, day, targets, held, last_trade, notes): a quote for every
//    target and held name at its close on or before `day`; when the ledger
//    traded it after that close, at the trade's price (fresher), with a note;
//    without a close, at last_trade(id)'s price (never traded) and a note
//    says so. An empty last_trade means no name can lack a close (a
//    simulated pool buys only at closes): std::logic_error if one does. A close older
//    than kOldCloseDays gets a note when the name is bought or held.
//  - Views are asked in the order of the days given; a market::Series needs
//    them not to go back in time between calls.
#pragma once

#include <cstdint>
#include <functional>
#include <optional>
#include <set>
#include <string>
#include <utility>
#include <vector>

#include "core/date.h"
#include "market/series.h"
#include "market/view.h"
#include "rules/engine.h"
#include "rules/rule.h"

namespace keel::rules {

class TrackRecord;

struct Selection {
  ScreenResult screen;
  std::vector<Target> targets;     // empty when refused
  std::optional<Refusal> refusal;  // why the rule holds nothing on the day
};

enum class Convert { no, yes };

class Inputs {
 public:
  static constexpr int kOldCloseDays = 7;
  // A converted price is an estimate; six places keep an order's value
  // within a cent of the exact product for any quantity below 10^4.
  static constexpr int kQuotePlaces = 6;

  Inputs(const Rule& rule, const market::View& view,
         std::optional<std::string> currency = std::nullopt, Convert convert = Convert::no);

  const std::vector<std::int64_t>& universe() const { return universe_; }
  const std::vector<std::int64_t>& sleeves() const { return sleeves_; }
  // The currency the rule trades in; unset only when nothing has one.
  const std::optional<std::string>& currency() const { return currency_; }
  // The currency prices are converted into (Convert::yes); unset otherwise.
  std::optional<std::string> converts_into() const {
    return convert_ == Convert::yes ? currency_ : std::nullopt;
  }
  // Notes about the universe (stocks left out for their currency).
  const std::vector<std::string>& notes() const { return notes_; }
  // The universe and the sleeves: what a preloaded view must hold.
  std::vector<std::int64_t> securities() const;
  // What a market::Series over [from, to] must load for the rule: the
  // universe, the sleeves and `extra`, what a merger or spin-off in the span
  // hands out (and so on), the rule's metric, and with Convert::yes the
  // exchange rates of their currencies and the rule's.
  market::Series::Request series_request(const market::View& catalog, Date from, Date to,
                                         std::vector<std::int64_t> extra = {}) const;
  // With a track record attached (rules/track_record.h), candidates() carry
  // each name's track record for the day. The record must outlive the use.
  void use(const TrackRecord* track) { track_ = track; }

  // What the engine may know on `day`: one candidate per universe name.
  std::vector<Candidate> candidates(const market::View& view, Date day,
                                    const std::set<std::int64_t>& held) const;
  Selection select(const market::View& view, Date day, const std::set<std::int64_t>& held,
                   Explain explain = Explain::all) const;

  struct Trade {
    Date day;
    Decimal price;
  };
  using LastTrade = std::function<std::optional<Trade>(std::int64_t security_id)>;
  Quotes quotes(const market::View& view, Date day, const std::vector<Target>& targets,
                const std::set<std::int64_t>& held, const LastTrade& last_trade,
                std::vector<std::string>& notes) const;
  // quotes() into `quotes`, kept from call to call (a run of many days): a
  // name already there keeps its symbol and lot size and is priced anew on
  // `day`, with the same notes. Names there from an earlier call that are
  // neither targets nor held now stay, priced as they were: rules::orders()
  // reads only the quotes of the targets and of the names held.
  void requote(const market::View& view, Date day, const std::vector<Target>& targets,
               const std::set<std::int64_t>& held, const LastTrade& last_trade,
               std::vector<std::string>& notes, Quotes& quotes) const;

 private:
  const Rule& rule_;
  std::vector<Candidate> candidates_without_track(const market::View& view, Date day,
                                                  const std::set<std::int64_t>& held) const;

  std::optional<std::string> group_of(const market::View& view, std::int64_t id) const;
  // The series' column of each universe name (std::out_of_range for one not
  // loaded), found again only when the series' columns differ.
  const std::vector<int>& columns_in(const market::Series& series) const;
  mutable std::vector<int> columns_;

  std::vector<std::string> metrics_;  // the screen's, in order
  std::vector<std::int64_t> universe_;
  // (id, position in universe_) of every universe name, by id.
  std::vector<std::pair<std::int64_t, std::size_t>> by_id_;
  // Calls inside(position in universe_) for each name of `held` in the
  // universe and outside(id) for the others, in id order.
  template <typename Inside, typename Outside>
  void match_held(const std::set<std::int64_t>& held, Inside inside, Outside outside) const;
  // A flag per universe name: 1 when `held` holds it.
  std::vector<char> held_flags(const std::set<std::int64_t>& held) const;
  // Universe name i's price in the rule's currency (with Convert::yes: why
  // it has none on `day`) and its group, on its candidate.
  void price_and_group(const market::View& view, std::size_t i, Date day, Candidate& c) const;
  bool per_name_ = false;                // price_and_group() has anything to do
  std::vector<std::string> symbols_;     // of the universe
  std::vector<std::string> currencies_;  // of the universe
  // Why the universe name in `currency` has no price in the rule's on `day`
  // (empty when it has).
  std::string unpriced(const market::View& view, const std::string& currency, Date day) const;
  std::vector<std::int64_t> sleeves_;
  std::optional<std::string> currency_;
  Convert convert_ = Convert::no;
  std::vector<std::string> notes_;
  const TrackRecord* track_ = nullptr;
};

// Inputs::quotes() without a rule: for names a plan holds outside any rule's
// universe (a fixed sleeve, unmanaged holdings).
// With `into`, prices in other currencies are converted (Convert::yes).
Quotes quote_names(const market::View& view, Date day, const std::vector<Target>& targets,
                   const std::set<std::int64_t>& held, const Inputs::LastTrade& last_trade,
                   std::vector<std::string>& notes,
                   const std::optional<std::string>& into = std::nullopt);
// Inputs::requote() without a rule.
void requote_names(const market::View& view, Date day, const std::vector<Target>& targets,
                   const std::set<std::int64_t>& held, const Inputs::LastTrade& last_trade,
                   std::vector<std::string>& notes, const std::optional<std::string>& into,
                   Quotes& quotes);
// "no exchange rate for USD/EUR on or before 2025-03-03"
std::string no_rate_text(const std::string& from, const std::string& to, Date day);

// A rule trades in one currency (keel does not convert between currencies
// yet): a sleeve or a listed symbol priced in another than `currency` is
// refused at its key; stocks of the whole ledger or of a sector priced in
// another are left out of `universe`, and the note returned says how many.
std::optional<std::string> keep_currency(const Rule& rule, const std::string& currency,
                                         const std::vector<const Security*>& sleeves,
                                         std::vector<const Security*>& universe);

}  // namespace keel::rules
