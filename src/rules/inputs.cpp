#include "rules/inputs.h"

#include <fmt/format.h>
#include <fmt/ranges.h>

#include <algorithm>
#include <map>
#include <stdexcept>
#include <unordered_set>

#include "core/error.h"
#include "core/text.h"
#include "market/series.h"
#include "rules/order_steps.h"
#include "rules/track_record.h"

namespace keel::rules {

std::optional<std::string> keep_currency(const Rule& rule, const std::string& currency,
                                         const std::vector<const Security*>& sleeves,
                                         std::vector<const Security*>& universe) {
  auto refuse = [&](std::string_view key, const Security& s) {
    rule.fail(key, fmt::format("{} is priced in {} and the rule trades in {}; keel does not "
                               "convert between currencies yet",
                               printable(s.symbol), s.currency, currency));
  };
  for (const Security* s : sleeves)
    if (s->currency != currency) refuse("sleeve.symbol", *s);
  if (rule.universe == Universe::list) {
    for (const Security* s : universe)
      if (s->currency != currency) refuse("scope.symbols", *s);
    return std::nullopt;
  }
  const auto kept = std::stable_partition(
      universe.begin(), universe.end(), [&](const Security* s) { return s->currency == currency; });
  const auto left_out = static_cast<std::size_t>(universe.end() - kept);
  universe.erase(kept, universe.end());
  if (left_out == 0) return std::nullopt;
  return fmt::format(
      "{} stock{} priced in other currencies than {} {} left out of the universe "
      "(keel does not convert between currencies yet)",
      left_out, left_out == 1 ? "" : "s", currency, left_out == 1 ? "is" : "are");
}

std::string no_rate_text(const std::string& from, const std::string& to, Date day) {
  return fmt::format("no exchange rate for {}/{} on or before {}", from, to, day.str());
}

Inputs::Inputs(const Rule& rule, const market::View& view, std::optional<std::string> currency,
               Convert convert)
    : rule_(rule), currency_(std::move(currency)), convert_(convert) {
  if (convert_ == Convert::yes && !currency_)
    throw std::logic_error("rules::Inputs: converting needs a currency");
  for (const auto& m : rule.screen.metrics()) metrics_.push_back(m.name);
  auto find = [&](const std::string& symbol, std::string_view key) {
    const Security* s = view.security(symbol);
    if (!s) rule.fail(key, fmt::format("no security '{}' in the ledger", printable(symbol)));
    return s->id;
  };
  for (const auto& sl : rule.weights.sleeves) sleeves_.push_back(find(sl.symbol, "sleeve.symbol"));
  std::map<std::string, std::int64_t> chosen;  // by symbol
  if (rule.universe == Universe::list) {
    for (const auto& sym : rule.symbols) chosen[sym] = find(sym, "scope.symbols");
  } else {
    for (const auto& s : view.securities()) {
      if (s.kind != SecurityKind::stock) continue;
      if (std::find(sleeves_.begin(), sleeves_.end(), s.id) != sleeves_.end()) continue;
      if (rule.universe == Universe::all_stocks || (s.sector && *s.sector == rule.sector))
        chosen[s.symbol] = s.id;
    }
    if (chosen.empty() && rule.universe == Universe::sector) {
      const auto sectors = view.sectors();
      rule.fail("scope.sector",
                fmt::format("no stock in the ledger has sector '{}'{}", printable(rule.sector),
                            sectors.empty() ? "" : " (sectors: " + printable_list(sectors) + ")"));
    }
    if (chosen.empty())
      throw InputError(fmt::format(
          "{}: the universe is every stock in the ledger, and the ledger holds none; import "
          "securities first",
          printable(rule.source)));
  }
  std::vector<const Security*> universe, sleeves;
  for (const auto& [symbol, id] : chosen) universe.push_back(view.security(id));
  for (const std::int64_t id : sleeves_) sleeves.push_back(view.security(id));
  if (!currency_ && !sleeves.empty()) currency_ = sleeves.front()->currency;
  if (!currency_) {
    std::set<std::string> seen;
    for (const Security* s : universe) seen.insert(s->currency);
    if (seen.size() > 1)
      rule.fail("scope", fmt::format("the universe holds stocks priced in {}; keel does not "
                                     "convert between currencies yet: narrow it to one with "
                                     "scope.sector or scope.symbols",
                                     fmt::join(seen, ", ")));
    if (!seen.empty()) currency_ = *seen.begin();
  }
  if (currency_ && convert_ == Convert::no)
    if (auto note = keep_currency(rule, *currency_, sleeves, universe))
      notes_.push_back(std::move(*note));
  for (const Security* s : universe) {
    by_id_.emplace_back(s->id, universe_.size());
    universe_.push_back(s->id);
    symbols_.push_back(s->symbol);
    currencies_.push_back(s->currency);
  }
  std::sort(by_id_.begin(), by_id_.end());
  per_name_ = convert_ == Convert::yes || rule.screen.within != Within::universe;

  const auto names = view.metric_names();
  for (const auto& metric : rule.screen.metrics()) {
    if (std::find(names.begin(), names.end(), metric.name) != names.end()) continue;
    std::string why =
        fmt::format("the ledger holds no figures for metric '{}'", printable(metric.name));
    if (auto near = nearest(metric.name, names))
      why += fmt::format("; did you mean '{}'?", printable(*near));
    else if (!names.empty())
      why += fmt::format(" (stored metrics: {})", printable_list(names));
    else
      why += "; import metrics first ('keel import metrics FILE')";
    rule.fail(rule.screen.metric_list.empty() ? "screen.metric" : "screen.metrics", why);
  }
}

std::string Inputs::unpriced(const market::View& view, const std::string& currency,
                             Date day) const {
  if (convert_ == Convert::no || currency == *currency_ || view.try_rate(currency, *currency_, day))
    return {};
  return no_rate_text(currency, *currency_, day);
}

std::optional<std::string> Inputs::group_of(const market::View& view, std::int64_t id) const {
  switch (rule_.screen.within) {
    case Within::sector:
      return view.security(id)->sector;
    case Within::country:
      return view.security(id)->country;
    case Within::universe:
      break;
  }
  return std::nullopt;
}

std::vector<std::int64_t> Inputs::securities() const {
  std::vector<std::int64_t> out = universe_;
  out.insert(out.end(), sleeves_.begin(), sleeves_.end());
  return out;
}

market::Series::Request Inputs::series_request(const market::View& catalog, Date from, Date to,
                                               std::vector<std::int64_t> extra) const {
  market::Series::Request request;
  request.securities = securities();
  request.securities->insert(request.securities->end(), extra.begin(), extra.end());
  // What a merger or spin-off of a loaded name hands out must be priced too,
  // in the universe or not (and so on, for an action of that name).
  const auto actions = catalog.actions(std::nullopt, from, to);
  for (bool grew = true; grew;) {
    grew = false;
    std::set<std::int64_t> loaded(request.securities->begin(), request.securities->end());
    for (const auto& a : actions)
      if (a.target_id && loaded.count(a.security_id) && !loaded.count(*a.target_id)) {
        request.securities->push_back(*a.target_id);
        loaded.insert(*a.target_id);
        grew = true;
      }
  }
  request.from = from;
  request.to = to;
  for (const auto& m : rule_.screen.metrics()) request.metrics.push_back(m.name);
  // Converting, the screen asks the series for each name's rate into the
  // rule's currency: every currency loaded must have its rates too.
  if (convert_ == Convert::yes && currency_) {
    std::set<std::string> codes{*currency_};
    for (const std::int64_t id : *request.securities)
      if (const auto s = catalog.security(id)) codes.insert(s->currency);
    request.currencies.assign(codes.begin(), codes.end());
  }
  return request;
}

std::vector<Candidate> Inputs::candidates(const market::View& view, Date day,
                                          const std::set<std::int64_t>& held) const {
  auto out = candidates_without_track(view, day, held);
  if (track_) {
    const auto stats = track_->at(day);
    for (auto& c : out) {
      const auto it = stats.find(c.security_id);
      c.track = it == stats.end() ? TrackStat{} : it->second;
    }
  }
  return out;
}

const std::vector<int>& Inputs::columns_in(const market::Series& series) const {
  // Kept from the last call when every column still holds its name (a
  // series at the same address may be another one).
  bool same = columns_.size() == universe_.size();
  for (std::size_t i = 0; same && i < universe_.size(); ++i)
    same = columns_[i] < series.columns() && series.security_id(columns_[i]) == universe_[i];
  if (same) return columns_;
  columns_.clear();
  for (const std::int64_t id : universe_) {
    const int col = series.column(id);
    if (col < 0)
      throw std::out_of_range(fmt::format("rules::Inputs: security {} is not loaded", id));
    columns_.push_back(col);
  }
  return columns_;
}

std::vector<Candidate> Inputs::candidates_without_track(const market::View& view, Date day,
                                                        const std::set<std::int64_t>& held) const {
  std::vector<Candidate> out;
  out.reserve(universe_.size());
  if (const auto* series = dynamic_cast<const market::Series*>(&view)) {
    // Preloaded: the figures by the series' cursors, closes from the grid.
    auto& figures = series->cursor(rule_.screen.metric);
    figures.advance_to(day);
    std::vector<market::Series::FigureCursor*> more;
    for (std::size_t m = 1; m < metrics_.size(); ++m) {
      more.push_back(&series->cursor(metrics_[m]));
      more.back()->advance_to(day);
    }
    const std::size_t row = series->row(day);
    const auto& columns = columns_in(*series);
    const auto is_held = held_flags(held);
    for (std::size_t i = 0; i < universe_.size(); ++i) {
      const std::int64_t id = universe_[i];
      const int col = columns[i];
      // Built in place, once: a back-test asks for a thousand every month.
      Candidate& c = out.emplace_back();
      c.security_id = id;
      c.symbol = symbols_[i];
      c.held = is_held[i] != 0;
      c.ended = series->ended(id, day);
      if (const auto* f = figures.at(col))
        c.figure.emplace(Figure{f->value, f->period, f->known_on});
      bool any = c.figure.has_value();
      if (!more.empty()) c.more.reserve(more.size());
      for (auto* cursor : more) {
        const auto* f = cursor->at(col);
        c.more.push_back(f ? std::optional<Figure>(Figure{f->value, f->period, f->known_on})
                           : std::nullopt);
        any = any || f;
      }
      if (any) c.has_price = series->has(row, col);
      if (per_name_) price_and_group(view, i, day, c);
    }
    return out;
  }
  const auto is_held = held_flags(held);
  for (std::size_t i = 0; i < universe_.size(); ++i) {
    const std::int64_t id = universe_[i];
    Candidate& c = out.emplace_back();
    c.security_id = id;
    c.symbol = symbols_[i];
    c.held = is_held[i] != 0;
    c.ended = view.ended(id, day);
    if (auto f = view.figure(id, rule_.screen.metric, day))
      c.figure = Figure{std::move(f->value), f->period, f->known_on};
    bool any = c.figure.has_value();
    for (std::size_t m = 1; m < metrics_.size(); ++m) {
      auto f = view.figure(id, metrics_[m], day);
      c.more.push_back(
          f ? std::optional<Figure>(Figure{std::move(f->value), f->period, f->known_on})
            : std::nullopt);
      any = any || f;
    }
    if (any) c.has_price = view.has_close(id, day);
    if (per_name_) price_and_group(view, i, day, c);
  }
  return out;
}

void Inputs::price_and_group(const market::View& view, std::size_t i, Date day,
                             Candidate& c) const {
  if (c.has_price && convert_ == Convert::yes) {
    c.unpriced_why = unpriced(view, currencies_[i], day);
    c.has_price = c.unpriced_why.empty();
  }
  if (rule_.screen.within != Within::universe) c.group = group_of(view, universe_[i]);
}

template <typename Inside, typename Outside>
void Inputs::match_held(const std::set<std::int64_t>& held, Inside inside, Outside outside) const {
  // Both in id order: one walk.
  auto it = by_id_.begin();
  for (const std::int64_t id : held) {
    while (it != by_id_.end() && it->first < id) ++it;
    if (it != by_id_.end() && it->first == id)
      inside(it->second);
    else
      outside(id);
  }
}

std::vector<char> Inputs::held_flags(const std::set<std::int64_t>& held) const {
  std::vector<char> out(universe_.size(), 0);
  match_held(
      held, [&](std::size_t at) { out[at] = 1; }, [](std::int64_t) {});
  return out;
}

Selection Inputs::select(const market::View& view, Date day, const std::set<std::int64_t>& held,
                         Explain explain) const {
  Selection out;
  out.screen = screen(rule_, day, candidates(view, day, held), explain);
  auto chosen = targets(rule_, out.screen, sleeves_);
  out.refusal = std::move(chosen.refusal);
  out.targets = std::move(chosen.list);
  if (out.refusal) return out;
  // Held names outside the universe leave the pool. (A held name of the
  // universe is a target already: selected, or an exit of the screen's; so
  // is a sleeve.)
  match_held(
      held, [](std::size_t) {},
      [&](std::int64_t id) {
        if (std::find(sleeves_.begin(), sleeves_.end(), id) == sleeves_.end())
          out.targets.push_back(Target{id, view.security(id)->symbol, Decimal(), false,
                                       std::nullopt, true, "not in the rule's universe"});
      });
  for (std::size_t i = 0; i < sleeves_.size(); ++i) {
    if (!view.has_close(sleeves_[i], day))
      rule_.fail("sleeve.symbol",
                 fmt::format("sleeve '{}' has no close on or before {}",
                             printable(rule_.weights.sleeves[i].symbol), day.str()));
    if (const auto why = unpriced(view, view.security(sleeves_[i])->currency, day); !why.empty())
      rule_.fail("sleeve.symbol",
                 fmt::format("sleeve '{}': {}", printable(rule_.weights.sleeves[i].symbol), why));
  }
  return out;
}

Quotes Inputs::quotes(const market::View& view, Date day, const std::vector<Target>& targets,
                      const std::set<std::int64_t>& held, const LastTrade& last_trade,
                      std::vector<std::string>& notes) const {
  return quote_names(view, day, targets, held, last_trade, notes,
                     convert_ == Convert::yes ? currency_ : std::nullopt);
}

Quotes quote_names(const market::View& view, Date day, const std::vector<Target>& targets,
                   const std::set<std::int64_t>& held, const Inputs::LastTrade& last_trade,
                   std::vector<std::string>& notes, const std::optional<std::string>& into) {
  Quotes quotes;
  quotes.reserve(targets.size() + held.size());
  requote_names(view, day, targets, held, last_trade, notes, into, quotes);
  return quotes;
}

void Inputs::requote(const market::View& view, Date day, const std::vector<Target>& targets,
                     const std::set<std::int64_t>& held, const LastTrade& last_trade,
                     std::vector<std::string>& notes, Quotes& quotes) const {
  requote_names(view, day, targets, held, last_trade, notes,
                convert_ == Convert::yes ? currency_ : std::nullopt, quotes);
}

void requote_names(const market::View& view, Date day, const std::vector<Target>& targets,
                   const std::set<std::int64_t>& held, const Inputs::LastTrade& last_trade,
                   std::vector<std::string>& notes, const std::optional<std::string>& into,
                   Quotes& quotes) {
  // A quote kept from an earlier call has its security's symbol and lot size
  // already; only its price (and what goes with it) is set again.
  auto add = [&](std::int64_t id, bool wanted) {
    auto [it, fresh] = quotes.try_emplace(id);
    Quote& q = it->second;
    const Security* s = fresh || into ? view.security(id) : nullptr;
    if (fresh) {
      q.symbol = s->symbol;
      q.lot_size = s->lot_size;
    }
    q.tradable = true;
    q.fx = std::nullopt;
    const auto trade = last_trade ? last_trade(id) : std::nullopt;
    if (const auto c = view.close(id, day); c && trade && trade->day > c->day) {
      // Traded after its latest close: the trade is the fresher price.
      q.price = trade->price;
      notes.push_back(
          fmt::format("{}: valued at its trade price {} of {}, later than its "
                      "latest close ({})",
                      printable(q.symbol), trade->price.str(), trade->day.str(), c->day.str()));
    } else if (c) {
      q.price = c->price;
      if (day - c->day > Inputs::kOldCloseDays && (wanted || held.count(id)))
        notes.push_back(fmt::format("{}: the latest close on or before {} is from {}",
                                    printable(q.symbol), day.str(), c->day.str()));
    } else {
      if (!last_trade)
        throw std::logic_error(
            fmt::format("rules::Inputs: no close for security {} on {}", id, day.str()));
      q.tradable = false;
      q.price = trade ? trade->price : Decimal();
      notes.push_back(fmt::format(
          "{}: no close on or before {}; valued at {}", printable(q.symbol), day.str(),
          trade ? "its last trade price " + trade->price.str() : "zero (it never traded)"));
    }
    if (into && s->currency != *into) {
      if (const auto fx = view.try_rate(s->currency, *into, day)) {
        q.fx = QuoteFx{s->currency, q.price, fx->rate,
                       fx->how == market::FxHow::inverted || fx->how == market::FxHow::crossed,
                       fx->describe()};
        q.price = (q.price * fx->rate).rounded(Inputs::kQuotePlaces);
      } else {
        // Never traded: spending or raising cash through a missing rate
        // would be a guess.
        q.tradable = false;
        q.price = Decimal();
        notes.push_back(fmt::format("{}: {}; valued at zero and not traded", printable(q.symbol),
                                    no_rate_text(s->currency, *into, day)));
      }
    }
  };
  // Each name once: a target named twice takes its first line, a held name
  // that is a target its target's.
  const steps::TargetIds listed = steps::target_ids(targets);
  std::unordered_set<std::int64_t> seen;  // with repeats only
  for (const auto& t : targets)
    if (!listed.repeats || seen.insert(t.security_id).second)
      add(t.security_id, t.weight.is_positive());
  for (const std::int64_t id : held)
    if (!listed.has(id)) add(id, false);
}

}  // namespace keel::rules
