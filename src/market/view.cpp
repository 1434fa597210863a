#include "market/view.h"

#include <set>

namespace keel::market {

std::vector<std::string> View::sectors() const {
  std::set<std::string> out;
  for (const auto& s : securities())
    if (s.kind == SecurityKind::stock && s.sector) out.insert(*s.sector);
  return {out.begin(), out.end()};
}

void View::index() const {
  if (!by_id_.empty() || securities().empty()) return;
  const auto& all = securities();
  for (std::size_t i = 0; i < all.size(); ++i) {
    by_id_.emplace(all[i].id, i);
    by_symbol_.emplace(all[i].symbol, i);
  }
}

FxQuote View::rate(const std::string& base, const std::string& quote, Date day) const {
  if (base == quote) return FxQuote{base, quote, Decimal::parse("1"), day, FxHow::same, {}};
  return rates_for(base, quote, day).find(base, quote, day);
}

std::optional<FxQuote> View::try_rate(const std::string& base, const std::string& quote,
                                      Date day) const {
  if (base == quote) return rate(base, quote, day);
  return rates_for(base, quote, day).try_find(base, quote, day);
}

Decimal View::convert(const Decimal& amount, const std::string& from, const std::string& to,
                      Date day) const {
  if (from == to) return amount;
  return rates_for(from, to, day).convert(amount, from, to, day);
}

const Security* View::security(std::int64_t id) const {
  index();
  const auto it = by_id_.find(id);
  return it == by_id_.end() ? nullptr : &securities()[it->second];
}

const Security* View::security(std::string_view symbol) const {
  index();
  const auto it = by_symbol_.find(symbol);
  return it == by_symbol_.end() ? nullptr : &securities()[it->second];
}

std::vector<CorporateAction> actions_between(const std::vector<CorporateAction>& live,
                                             std::optional<std::int64_t> security_id, Date from,
                                             Date to) {
  std::vector<CorporateAction> out;
  for (const auto& a : live)
    if (a.date >= from && a.date <= to && (!security_id || a.security_id == *security_id))
      out.push_back(a);
  return out;
}

std::optional<Date> end_of(const std::vector<CorporateAction>& live, std::int64_t security_id,
                           Date day) {
  for (const auto& a : live) {
    if (a.date > day) break;
    if (a.security_id == security_id &&
        (a.kind == ActionKind::merger || a.kind == ActionKind::delisting))
      return a.date;
  }
  return std::nullopt;
}

}  // namespace keel::market
