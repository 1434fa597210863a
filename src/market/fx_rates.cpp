#include "market/fx_rates.h"

#include <fmt/format.h>

#include <algorithm>
#include <set>

#include "core/currency.h"
#include "core/error.h"

namespace keel::market {

std::string FxQuote::describe() const {
  std::string how_text;
  if (how == FxHow::inverted) how_text = fmt::format(", inverted from {}/{}", quote, base);
  if (how == FxHow::crossed) how_text = fmt::format(", crossed through {}", pivot);
  if (how == FxHow::same) how_text = ", the same currency";
  return fmt::format("{}/{} {} ({}{})", base, quote, rate.str(), day.str(), how_text);
}

void FxRates::add(const std::string& base, const std::string& quote, Date day,
                  const Decimal& rate) {
  auto& rows = series_[{base, quote}];
  const auto at = std::lower_bound(rows.begin(), rows.end(), day,
                                   [](const auto& r, Date d) { return r.first < d; });
  if (at != rows.end() && at->first == day)
    at->second = rate;
  else
    rows.insert(at, {day, rate});
}

std::optional<FxRates::Leg> FxRates::leg(const std::string& from, const std::string& to,
                                         Date day) const {
  auto latest = [&](const std::string& b, const std::string& q) -> std::optional<Leg> {
    const auto it = series_.find({b, q});
    if (it == series_.end()) return std::nullopt;
    const auto& rows = it->second;
    auto after = std::upper_bound(rows.begin(), rows.end(), day,
                                  [](Date d, const auto& r) { return d < r.first; });
    if (after == rows.begin()) return std::nullopt;
    --after;
    return Leg{after->second, after->first, false};
  };
  auto direct = latest(from, to);
  auto reverse = latest(to, from);
  // Both directions stored: the more recent row wins; on the same day, the direct one.
  if (direct && (!reverse || direct->day >= reverse->day)) return direct;
  if (reverse) {
    reverse->inverted = true;
    return reverse;
  }
  return std::nullopt;
}

std::optional<std::pair<FxRates::Leg, FxRates::Leg>> FxRates::cross(const std::string& from,
                                                                    const std::string& to, Date day,
                                                                    std::string& pivot) const {
  std::set<std::string> pivots;
  for (const auto& [pair, rows] : series_) {
    pivots.insert(pair.first);
    pivots.insert(pair.second);
  }
  for (const auto& p : pivots) {
    if (p == from || p == to) continue;
    auto a = leg(from, p, day);
    auto b = leg(p, to, day);
    if (a && b) {
      pivot = p;
      return std::make_pair(*a, *b);
    }
  }
  return std::nullopt;
}

namespace {
[[noreturn]] void missing(const std::string& base, const std::string& quote, Date day) {
  throw InputError(
      fmt::format("no exchange rate for {}/{} on or before {} (nor for {}/{}, nor through a third "
                  "currency); import one with 'keel import fx FILE.csv'",
                  base, quote, day.str(), quote, base));
}
}  // namespace

std::optional<FxQuote> FxRates::try_find(const std::string& base, const std::string& quote,
                                         Date day) const {
  if (auto l = leg(base, quote, day)) {
    FxQuote q{base, quote, l->rate, l->day, FxHow::direct, {}};
    if (l->inverted) {
      q.rate = Decimal::divide(Decimal::parse("1"), l->rate, kDerivedPlaces);
      q.how = FxHow::inverted;
    }
    return q;
  }
  std::string pivot;
  if (auto legs = cross(base, quote, day, pivot)) {
    Decimal num = Decimal::parse("1"), den = Decimal::parse("1");
    for (const Leg& l : {legs->first, legs->second}) (l.inverted ? den : num) *= l.rate;
    return FxQuote{base,
                   quote,
                   Decimal::divide(num, den, kDerivedPlaces),
                   std::min(legs->first.day, legs->second.day),
                   FxHow::crossed,
                   pivot};
  }
  return std::nullopt;
}

FxQuote FxRates::find(const std::string& base, const std::string& quote, Date day) const {
  if (auto q = try_find(base, quote, day)) return *q;
  missing(base, quote, day);
}

Decimal FxRates::convert(const Decimal& amount, const std::string& from, const std::string& to,
                         Date day) const {
  Decimal num = amount, den = Decimal::parse("1");
  if (auto l = leg(from, to, day)) {
    (l->inverted ? den : num) *= l->rate;
  } else {
    std::string pivot;
    auto legs = cross(from, to, day, pivot);
    if (!legs) missing(to, from, day);
    for (const Leg& l : {legs->first, legs->second}) (l.inverted ? den : num) *= l.rate;
  }
  return Decimal::divide(num, den, minor_units(to));
}

}  // namespace keel::market
