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
//  - select(view, day, held): the engine's screen and targets on what the
//    view knew on `day` (rules/engine.h); held names outside the targets are
//    added as exits ("not in the rule's universe"). A day on which the rule
//    holds nothing is a normal result with its refusal. When the rule holds
//    something, every sleeve must have a close on or before the day
//    (InputError at sleeve.symbol otherwise).
//  - quotes(view, day, targets, held, fallback, notes): a quote for every
//    target and held name at its close on or before `day`; without one, the
//    price is fallback(id) (never traded) and a note says so. A close older
//    than kOldCloseDays gets a note when the name is bought or held.
//  - Views are asked in the order of the days given; a market::Series needs
//    them not to go back in time between calls.
#pragma once

#include <cstdint>
#include <functional>
#include <optional>
#include <set>
#include <string>
#include <vector>

#include "core/date.h"
#include "market/view.h"
#include "rules/engine.h"
#include "rules/rule.h"

namespace keel::rules {

struct Selection {
  ScreenResult screen;
  std::vector<Target> targets;     // empty when refused
  std::optional<Refusal> refusal;  // why the rule holds nothing on the day
};

class Inputs {
 public:
  static constexpr int kOldCloseDays = 7;

  Inputs(const Rule& rule, const market::View& view);

  const std::vector<std::int64_t>& universe() const { return universe_; }
  const std::vector<std::int64_t>& sleeves() const { return sleeves_; }
  // The universe and the sleeves: what a preloaded view must hold.
  std::vector<std::int64_t> securities() const;

  // What the engine may know on `day`: one candidate per universe name.
  std::vector<Candidate> candidates(const market::View& view, Date day,
                                    const std::set<std::int64_t>& held) const;
  Selection select(const market::View& view, Date day, const std::set<std::int64_t>& held,
                   Explain explain = Explain::all) const;

  using Fallback = std::function<std::optional<Decimal>(std::int64_t security_id)>;
  Quotes quotes(const market::View& view, Date day, const std::vector<Target>& targets,
                const std::set<std::int64_t>& held, const Fallback& fallback,
                std::vector<std::string>& notes) const;

 private:
  const Rule& rule_;
  std::vector<std::int64_t> universe_;
  std::vector<std::string> symbols_;  // of the universe
  std::vector<std::int64_t> sleeves_;
};

}  // namespace keel::rules
