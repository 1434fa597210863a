#include "perf/ledger_series.h"

#include <fmt/format.h>

#include <algorithm>
#include <limits>
#include <map>
#include <set>
#include <stdexcept>
#include <tuple>
#include <unordered_set>

#include "core/error.h"
#include "ledger/actions.h"

namespace keel::perf {
namespace {

// Days that may get an entry: from - 1, and every transaction, split,
// corporate action, close or exchange-rate day inside [from - 1, to]; those
// with nothing but a rate are marked.
struct EntryDay {
  Date day;
  bool rate_only = false;
};
std::vector<EntryDay> entry_days(const Replayer& replayer, const LedgerLog& log,
                                 const market::Series& prices, Date first, Date to) {
  // The live rows and the trading days come in ascending order already:
  // they are merged, not sorted (the few splits and actions are).
  auto keep = [&](std::vector<Date>& into, Date d) {
    if (d > first && d <= to && (into.empty() || into.back() != d)) into.push_back(d);
  };
  std::vector<Date> rows{first}, market, events;
  for (const Transaction* t : replayer.live()) keep(rows, t->date);
  for (const Date d : prices.trading_days()) keep(market, d);
  for (const auto& s : log.splits) keep(events, s.date);
  for (const auto* a : live_actions(log.actions)) keep(events, a->date);
  std::sort(events.begin(), events.end());
  std::vector<Date> merged(rows.size() + market.size());
  std::merge(rows.begin(), rows.end(), market.begin(), market.end(), merged.begin());
  std::vector<Date> days(merged.size() + events.size());
  std::merge(merged.begin(), merged.end(), events.begin(), events.end(), days.begin());
  days.erase(std::unique(days.begin(), days.end()), days.end());
  std::vector<EntryDay> out;
  for (const Date d : days) out.push_back({d, false});
  for (const Date d : prices.rate_days())
    if (d > first && d <= to && !std::binary_search(days.begin(), days.end(), d))
      out.push_back({d, true});
  std::sort(out.begin(), out.end(),
            [](const EntryDay& a, const EntryDay& b) { return a.day < b.day; });
  return out;
}

__extension__ typedef __int128 Wide;  // GCC and Clang; -Wpedantic wants the marker

// `d` as mantissa x 10^-scale when the mantissa has at most 18 digits.
bool small_mantissa(const Decimal& d, long long& mantissa, int& scale) {
  constexpr long long kLimit = 1'000'000'000'000'000'000;  // 10^18
  const auto m = d.machine_mantissa();
  if (!m || *m <= -kLimit || *m >= kLimit) return false;
  mantissa = *m;
  scale = d.scale();
  return true;
}

// The close x 10^places as an integer: what Series::scaled_close() gives,
// rounded here without a call into the maths library. The product lies
// within a small fraction of an integer below 2^50 (market/series.h), where
// adding a half and truncating is exact.
long long scaled_close(const market::Series& prices, std::size_t row, int column, int places) {
  const double x = prices.value(row, column) * market::Series::kScales[places];
  return static_cast<long long>(x < 0 ? x - 0.5 : x + 0.5);
}

// An exact sum of decimals kept as one 128-bit integer at one scale while it
// fits, the rest in a Decimal. Valuing every holding on every day through
// Decimal's arbitrary-precision integers cost as much as reading the closes;
// the products of a quantity and a close almost always fit a machine word.
class ExactSum {
 public:
  void clear() {
    sum_ = 0;
    scale_ = 0;
    rest_ = Decimal();
  }
  void add(const Decimal& d) {
    if (const auto m = d.machine_mantissa()) return add(Wide(*m), d.scale());
    rest_ += d;
  }
  // Adds mantissa x 10^-scale.
  void add(Wide mantissa, int scale) {
    Wide sum = sum_;
    if (scale > scale_ && !shifted(sum, scale - scale_)) return spill(mantissa, scale);
    if (scale < scale_ && !shifted(mantissa, scale_ - scale)) return spill(mantissa, scale);
    if (__builtin_add_overflow(sum, mantissa, &sum)) return spill(mantissa, scale);
    sum_ = sum;
    scale_ = std::max(scale, scale_);
  }
  Decimal total() const {
    if (sum_ >= kWordMin && sum_ <= kWordMax && scale_ <= Decimal::kMaxScale) {
      const Decimal sum = Decimal::scaled(static_cast<long long>(sum_), scale_);
      return rest_.is_zero() ? sum : rest_ + sum;
    }
    return rest_ + decimal(sum_, scale_);
  }

 private:
  static bool shifted(Wide& v, int digits) {
    for (; digits > 0; --digits)
      if (__builtin_mul_overflow(v, Wide(10), &v)) return false;
    return true;
  }
  void spill(Wide mantissa, int scale) { rest_ += decimal(mantissa, scale); }
  // mantissa x 10^-scale in Decimal, through parts that each fit a long long.
  static Decimal decimal(Wide mantissa, int scale) {
    constexpr long long kE18 = 1000000000000000000LL;
    const Decimal e18(kE18);
    const auto high = static_cast<long long>(mantissa / kE18 / kE18);
    const auto middle = static_cast<long long>(mantissa / kE18 % kE18);
    const auto low = static_cast<long long>(mantissa % kE18);
    Decimal out = (Decimal(high) * e18 + Decimal(middle)) * e18 + Decimal(low);
    for (; scale > 0; scale -= std::min(scale, Decimal::kMaxScale))
      out *= Decimal::scaled(1, std::min(scale, Decimal::kMaxScale));
    return out;
  }
  static constexpr Wide kWordMax = std::numeric_limits<long long>::max();
  static constexpr Wide kWordMin = -kWordMax;  // one machine word either way
  Wide sum_ = 0;
  int scale_ = 0;
  Decimal rest_;
};

}  // namespace

std::vector<std::int64_t> securities_held(const LedgerLog& log,
                                          std::optional<std::int64_t> account_id) {
  std::set<std::int64_t> out;
  for (const auto& t : log.transactions)
    if (t.security_id && (!account_id || t.account_id == *account_id)) out.insert(*t.security_id);
  // A spin-off or merger brings units of its target into every account that
  // holds its security; a chain of them is followed to its end.
  for (bool grew = true; grew;) {
    grew = false;
    for (const auto& a : log.actions)
      if (a.target_id && out.count(a.security_id) && out.insert(*a.target_id).second) grew = true;
  }
  return {out.begin(), out.end()};
}

std::vector<std::string> currencies_of(const LedgerLog& log,
                                       const std::vector<Security>& securities) {
  std::set<std::string> out;
  for (const auto& a : log.accounts) out.insert(a.currency);
  for (const auto& t : log.transactions) {
    if (t.currency) out.insert(*t.currency);
    if (t.to_currency) out.insert(*t.to_currency);
  }
  for (const auto& s : securities) out.insert(s.currency);
  out.erase(std::string());
  return {out.begin(), out.end()};
}

LedgerSeries build_series(const LedgerLog& log, const market::Series& prices,
                          std::optional<std::int64_t> account_id, Date from, Date to,
                          const std::string& currency, const std::vector<Date>& book_days) {
  if (from > to)
    throw InputError(
        fmt::format("the period starts on {}, after its end {}", from.str(), to.str()));
  Replayer replayer(log);
  const Date first = from.plus_days(-1);
  if (!std::is_sorted(book_days.begin(), book_days.end()) ||
      (!book_days.empty() && book_days.front() < first))
    throw std::invalid_argument("build_series: book days must ascend from the day before `from`");
  const auto& live = replayer.live();

  // Transfer-out rows whose receiving half is live: an internal pair.
  std::unordered_set<std::int64_t> paired_out;
  for (const Transaction* t : live)
    if (t->kind == TxnKind::transfer_in && t->link_id) paired_out.insert(*t->link_id);
  auto internal_pair = [&](const Transaction& t) {
    if (account_id) return false;
    if (t.kind == TxnKind::transfer_in) return t.link_id && paired_out.count(*t.link_id) > 0;
    if (t.kind == TxnKind::transfer_out) return paired_out.count(t.id) > 0;
    return false;
  };
  auto in_scope = [&](const Transaction& t) { return !account_id || t.account_id == *account_id; };
  std::map<std::int64_t, std::string> account_currency;
  for (const auto& a : log.accounts) account_currency[a.id] = a.currency;
  auto row_currency = [&](const Transaction& t) {
    return t.currency.value_or(account_currency.at(t.account_id));
  };
  auto security_currency = [&](std::int64_t security) -> const std::string& {
    const Security* s = prices.security(security);
    if (!s) throw std::logic_error("build_series: a security the ledger does not hold");
    return s->currency;
  };
  auto reported = [&](const Decimal& amount, const std::string& from_currency, Date d) {
    return prices.convert(amount, from_currency, currency, d);
  };

  LedgerSeries out;
  // The replay below passes every day once; the books asked for are copied
  // on the way, so a caller needs no replay of its own. Every one but the
  // last is a copy of what is held only (Book::holdings_copy()).
  std::size_t next_book = 0;
  auto take_books = [&](Date through) {
    for (; next_book < book_days.size() && book_days[next_book] <= through; ++next_book) {
      const Book& book = replayer.advance_to(book_days[next_book]);
      out.books.push_back(next_book + 1 == book_days.size() ? book : book.holdings_copy());
    }
  };
  const auto days = entry_days(replayer, log, prices, first, to);
  out.series.reserve(days.size());
  std::size_t cursor = 0;  // next live transaction not yet looked at for flows
  std::vector<const Split*> splits;
  for (const auto& sp : log.splits)
    if (sp.date > first && sp.date <= to) splits.push_back(&sp);
  std::sort(splits.begin(), splits.end(),
            [](const Split* a, const Split* b) { return a->date < b->date; });
  std::size_t split_cursor = 0;
  // The close of a security on or before day d, exactly, or nullopt.
  auto close_on = [&](std::int64_t security, Date d) -> std::optional<Decimal> {
    const int c = prices.column(security);
    if (c < 0) throw std::logic_error("build_series: the price series lacks a held security");
    const std::size_t r = prices.row(d);
    if (!prices.has(r, c)) return std::nullopt;
    return prices.exact(r, c);
  };
  // Corporate actions change the units of their security and of the one it
  // merges or spins into, in every account.
  const auto actions = live_actions(log.actions);
  std::size_t action_cursor = 0;
  while (action_cursor < actions.size() && actions[action_cursor]->date <= first) ++action_cursor;
  // What is held on a day, by currency: one sum per currency met so far.
  struct Local {
    std::string currency;
    ExactSum sum;
    bool used = false;  // today
  };
  std::vector<Local> local;
  auto slot_of = [&](const std::string& c) {
    for (std::size_t i = 0; i < local.size(); ++i)
      if (local[i].currency == c) return i;
    local.push_back({c, {}, false});
    return local.size() - 1;
  };
  auto add_local = [&](std::size_t slot) -> ExactSum& {
    local[slot].used = true;
    return local[slot].sum;
  };
  // Open quantities in scope, by security and, within it, by account; with
  // the security's price column and currency looked up once, not on every
  // day. Each security's quantities are added up over the accounts (exact,
  // so the value is the same as valuing each account's units apart), and its
  // sum's mantissa kept when it fits a machine word: a day is then one
  // product per security.
  struct Holding {
    std::vector<std::pair<std::int64_t, Decimal>> by_account;  // ascending by account
    Decimal quantity;                                          // their sum
    bool small = false;
    long long mantissa = 0;
    int scale = 0;
    int column = -1;
    int places = -1;  // of the column's closes; -1: kept as decimals
    std::size_t slot = 0;
  };
  std::map<std::int64_t, Holding> held;  // by security; only those with units in scope
  std::vector<const Holding*> valued;    // held's entries, in one array for the daily loop
  bool held_changed = true;
  auto hold = [&](std::int64_t account, std::int64_t security, std::optional<Decimal> quantity) {
    auto found = held.find(security);
    if (found == held.end()) {
      if (!quantity) return;
      Holding h;
      h.column = prices.column(security);
      if (h.column < 0)
        throw std::logic_error("build_series: the price series lacks a held security");
      h.places = prices.price_places(h.column);
      h.slot = slot_of(security_currency(security));
      found = held.emplace(security, std::move(h)).first;
      held_changed = true;
    }
    Holding& h = found->second;
    auto& owners = h.by_account;
    auto at = std::lower_bound(owners.begin(), owners.end(), account,
                               [](const auto& e, std::int64_t a) { return e.first < a; });
    if (!quantity) {
      if (at != owners.end() && at->first == account) owners.erase(at);
      if (owners.empty()) {
        held.erase(found);
        held_changed = true;
        return;
      }
    } else if (at != owners.end() && at->first == account) {
      at->second = std::move(*quantity);
    } else {
      owners.insert(at, {account, std::move(*quantity)});
    }
    h.quantity = Decimal();
    for (const auto& e : owners) h.quantity += e.second;
    h.small = small_mantissa(h.quantity, h.mantissa, h.scale);
  };
  auto refresh = [&](const Book& book, std::int64_t account, std::int64_t security) {
    const auto& positions = book.account(account).positions;
    const auto it = positions.find(security);
    hold(account, security,
         it == positions.end() ? std::nullopt : std::optional<Decimal>(it->second.quantity()));
  };
  // The accounts in scope and the sum of the currency each keeps.
  std::vector<std::pair<std::int64_t, std::size_t>> scoped;
  for (const auto& a : log.accounts)
    if (!account_id || a.id == *account_id) scoped.emplace_back(a.id, slot_of(a.currency));
  // Starts a day's sums with the cash in scope, in every currency.
  auto add_cash = [&](const Book& book) {
    for (auto& l : local) {
      l.sum.clear();
      l.used = false;
    }
    for (const auto& [account, slot] : scoped) {
      const AccountBook& ab = book.account(account);
      add_local(slot).add(ab.cash);
      for (const auto& [c, lots] : ab.foreign_cash)
        add_local(slot_of(c)).add(ab.foreign_balance(c));
    }
  };
  // A day on which some holding has no close values each account's units
  // apart, by (account, security), as the fall-backs and the list of
  // unpriced securities go by that order.
  auto value_apart = [&](const Book& book, Date d, std::size_t row) {
    std::vector<std::tuple<std::int64_t, std::int64_t, const Holding*, const Decimal*>> units;
    for (const auto& [security, h] : held)
      for (const auto& [account, quantity] : h.by_account)
        units.emplace_back(account, security, &h, &quantity);
    std::sort(units.begin(), units.end(), [](const auto& a, const auto& b) {
      return std::tie(std::get<0>(a), std::get<1>(a)) < std::tie(std::get<0>(b), std::get<1>(b));
    });
    for (const auto& [account, security, h, quantity] : units) {
      if (prices.has(row, h->column)) {
        add_local(h->slot).add(*quantity * prices.exact(row, h->column));
      } else if (const auto traded = book.last_trade_price(security)) {
        add_local(h->slot).add(*quantity * *traded);
      } else {
        out.unpriced_on.emplace_back(d, security);
      }
    }
  };

  // Not a structured binding: clang before 16 cannot capture one in the
  // lambdas below.
  for (const EntryDay& entry : days) {
    const Date d = entry.day;
    const bool rate_only = entry.rate_only;
    take_books(d.plus_days(-1));
    const Book& book = replayer.advance_to(d);
    DayPoint point;
    point.day = d;
    // Quantities change only where a transaction or split touched a
    // position; refresh those, keep the rest (summing lots daily is slow).
    if (d == first) {
      for (const auto& info : book.accounts())
        if (!account_id || info.id == *account_id)
          for (const auto& [security_id, position] : book.account(info.id).positions)
            hold(info.id, security_id, position.quantity());
    } else {
      for (std::size_t i = cursor; i < live.size() && live[i]->date == d; ++i)
        if (live[i]->security_id && in_scope(*live[i]))
          refresh(book, live[i]->account_id, *live[i]->security_id);
      for (; split_cursor < splits.size() && splits[split_cursor]->date <= d; ++split_cursor)
        for (const auto& info : book.accounts())
          if (!account_id || info.id == *account_id)
            refresh(book, info.id, splits[split_cursor]->security_id);
      for (; action_cursor < actions.size() && actions[action_cursor]->date <= d; ++action_cursor)
        for (const auto& info : book.accounts())
          if (!account_id || info.id == *account_id) {
            refresh(book, info.id, actions[action_cursor]->security_id);
            if (actions[action_cursor]->target_id)
              refresh(book, info.id, *actions[action_cursor]->target_id);
          }
    }
    // What is held, by currency, converted once per currency.
    add_cash(book);
    const std::size_t row = prices.row(d);
    if (held_changed) {
      valued.clear();
      for (const auto& entry : held) valued.push_back(&entry.second);
      held_changed = false;
    }
    bool all_closed = true;
    for (const Holding* h : valued) {
      if (!prices.has(row, h->column)) {
        all_closed = false;
        break;
      }
      if (h->small && h->places >= 0)
        add_local(h->slot).add(Wide(h->mantissa) * scaled_close(prices, row, h->column, h->places),
                               h->scale + h->places);
      else
        add_local(h->slot).add(h->quantity * prices.exact(row, h->column));
    }
    if (!all_closed) {
      // Start the day's holdings over, one account's units at a time.
      add_cash(book);
      value_apart(book, d, row);
    }
    bool foreign = false;
    for (const auto& l : local) {
      if (!l.used) continue;
      const Decimal amount = l.sum.total();
      // Nothing held in a currency needs no rate (an account in another
      // currency before its first deposit).
      if (amount.is_zero()) continue;
      point.value += reported(amount, l.currency, d);
      foreign = foreign || l.currency != currency;
    }
    // A day with only a new rate changes nothing when nothing foreign is held.
    if (rate_only && !foreign) continue;
    for (; cursor < live.size() && live[cursor]->date <= d; ++cursor) {
      const Transaction& t = *live[cursor];
      if (t.date != d || !in_scope(t)) continue;
      const bool in_period = d >= from;
      const std::string& in = row_currency(t);
      if (in_period) {
        if (out.totals.empty() || out.totals.back().day != d) out.totals.push_back({d, {}, {}, {}});
        DayTotals& today = out.totals.back();
        today.fees += reported(t.fee, in, d);
        switch (t.kind) {
          case TxnKind::dividend:
          case TxnKind::interest:
            today.income += reported(*t.amount, in, d);
            break;
          case TxnKind::tax:
            today.tax += reported(*t.amount, in, d);
            break;
          case TxnKind::fee:
            today.fees += reported(*t.amount, in, d);
            break;
          default:
            break;
        }
      }
      if (internal_pair(t)) continue;
      auto transfer_value = [&]() -> Decimal {
        if (!t.security_id) return reported(*t.amount, in, d);
        // The transfer's own price is in its row's currency; the others in the security's.
        std::optional<Decimal> price;
        std::string priced_in = security_currency(*t.security_id);
        if (const auto close = close_on(*t.security_id, d)) price = *close;
        if (!price && t.price) price = t.price, priced_in = in;
        if (!price) price = book.last_trade_price(*t.security_id);
        if (!price) {
          out.unpriced_on.emplace_back(d, *t.security_id);
          return Decimal();
        }
        return reported(*t.quantity * *price, priced_in, d);
      };
      switch (t.kind) {
        case TxnKind::deposit:
          point.inflow += reported(*t.amount, in, d);
          break;
        case TxnKind::withdrawal:
          point.outflow += reported(*t.amount, in, d);
          break;
        case TxnKind::transfer_in:
          point.inflow += transfer_value();
          break;
        case TxnKind::transfer_out:
          point.outflow += transfer_value();
          break;
        default:
          break;
      }
    }
    out.series.push_back(std::move(point));
  }
  // Book days from the last entry on: the last one takes the replay's own
  // book, moved rather than copied (a book of many years is megabytes).
  for (; next_book < book_days.size(); ++next_book) {
    replayer.advance_to(book_days[next_book]);
    if (next_book + 1 == book_days.size())
      out.books.push_back(std::move(replayer).release());
    else
      out.books.push_back(replayer.book().holdings_copy());
  }
  for (const auto& t : out.totals) {
    out.income += t.income;
    out.tax += t.tax;
    out.fees += t.fees;
  }
  for (const auto& [d, security] : out.unpriced_on) out.unpriced.insert(security);
  return out;
}

LedgerSeries slice(const LedgerSeries& built, Date from, Date to) {
  if (built.series.empty() || from.plus_days(-1) < built.series.front().day ||
      to < from.plus_days(-1))
    throw std::invalid_argument("slice: the period is not inside the series built");
  const Date first = from.plus_days(-1);
  // The opening value is the latest entry on or before first.
  auto opening = std::upper_bound(built.series.begin(), built.series.end(), first,
                                  [](Date d, const DayPoint& p) { return d < p.day; });
  --opening;
  const Date opened = opening->day;
  LedgerSeries out;
  const auto end = std::upper_bound(opening, built.series.end(), to,
                                    [](Date d, const DayPoint& p) { return d < p.day; });
  out.series.assign(opening, end);
  for (const auto& t : built.totals)
    if (t.day >= from && t.day <= to) {
      out.totals.push_back(t);
      out.income += t.income;
      out.tax += t.tax;
      out.fees += t.fees;
    }
  for (const auto& [d, security] : built.unpriced_on)
    if (d >= opened && d <= to) {
      out.unpriced_on.emplace_back(d, security);
      out.unpriced.insert(security);
    }
  return out;
}

}  // namespace keel::perf
