// Proposals from a ledger: one month worked out by hand, point-in-time use of
// figures, errors of a rule meeting the ledger, saving and review, and the
// property that posting a proposal's orders leaves nothing more to propose.
#include <SQLiteCpp/Exception.h>
#include <doctest/doctest.h>
#include <fmt/format.h>

#include <algorithm>
#include <map>
#include <set>

#include "ledger_fixture.h"
#include "rules/propose.h"
#include "rules/repurchase.h"
#include "store/action_store.h"
#include "store/market_data.h"
#include "store/price_write.h"

using namespace keel;
using namespace keel::testing;
using namespace keel::rules;

namespace {

struct Market : LedgerFixture {
  void stock(const std::string& symbol, const char* lot_size = "1",
             SecurityKind kind = SecurityKind::stock, const char* currency = "USD") {
    Security s;
    s.symbol = symbol;
    s.name = symbol + " (invented)";
    s.kind = kind;
    s.lot_size = dec(lot_size);
    s.currency = currency;
    store::insert_security(db, s);
  }
  // Posts a proposal's orders as filled on `date` (default: its as-of day), at
  // its estimated prices times `price_factor`.
  void post_orders(const Proposal& p, std::optional<Date> date = std::nullopt,
                   const char* price_factor = "1") {
    for (const auto& o : p.plan.orders) {
      ledger::PostRequest r;
      r.kind = o.side == Side::buy ? TxnKind::buy : TxnKind::sell;
      r.date = date.value_or(p.as_of);
      r.account = o.account;
      r.symbol = o.symbol;
      r.quantity = o.quantity;
      r.price = (o.price * dec(price_factor)).rounded(4);
      r.fee = o.fee;
      for (const auto& l : o.lots) r.lots.push_back(LotPick{l.lot_id, l.quantity});
      ledger::post(db, r);
    }
  }
};

// The month of the example: five scored names, one excluded, two held, a bond sleeve.
struct Month : Market {
  Month() {
    account("Main");
    for (const char* s : {"A", "B", "C", "D", "E", "G"}) stock(s);
    stock("BOND", "1", SecurityKind::fund);
    cash(TxnKind::deposit, "2024-01-02", "Main", "10000");
    buy("2024-01-03", "Main", "C", "100", "20");  // lot 2
    buy("2024-01-03", "Main", "D", "50", "40");   // lot 3
    closes({{"A", "2024-05-31", "25"},
            {"B", "2024-05-31", "50"},
            {"C", "2024-05-31", "22"},
            {"D", "2024-05-31", "38"},
            {"E", "2024-05-31", "10"},
            {"G", "2024-05-31", "5"},
            {"BOND", "2024-05-31", "100"}});
    figures("pe", {{"A", "2024-03-31", "2024-04-30", "6"},
                   {"B", "2024-03-31", "2024-04-30", "8"},
                   {"C", "2024-03-31", "2024-04-30", "10"},
                   {"D", "2024-03-31", "2024-04-30", "12"},
                   {"E", "2024-03-31", "2024-04-30", "14"},
                   {"G", "2024-03-31", "2024-04-30", "-2"},
                   // Known only after the as-of day: invisible to it.
                   {"A", "2024-03-31", "2024-06-15", "30"},
                   {"B", "2024-05-31", "2024-06-20", "40"}});
  }
};

const char* kMonthRule = R"([scope]
accounts = ["Main"]

[select]
z_max = -0.5
exit_z = 0

[[sleeve]]
symbol = "BOND"
weight_pct = 20
)";

Rule month_rule(const std::string& text = kMonthRule) {
  return parse_rule(text, "month.toml");
}

}  // namespace

TEST_CASE("propose: one month on an invented ledger, worked out by hand") {
  Month m;
  const auto p = propose(m.db, month_rule());
  CHECK(p.as_of == day("2024-05-31"));  // the latest close
  // Pool: cash 6000 + C 100 x 22 + D 50 x 38 = 10100.
  CHECK(p.plan.pool_value == Decimal(10100));
  CHECK(p.screen.passed == 5);
  // Targets: BOND 20% = 2020.00; A, B, C 80% / 3 = 2693.33 each.
  // D leaves: sell 50 x 38 = 1900, cash 7900. Buys need 7899.99, all fit:
  // BOND 2020 / 100 = 20; A 2693.33 / 25 = 107; B / 50 = 53; C (493.33 short) / 22 = 22.
  REQUIRE(p.plan.orders.size() == 5);
  const auto& d = p.plan.orders[0];
  CHECK(d.symbol == "D");
  CHECK(d.side == Side::sell);
  CHECK(d.quantity == Decimal(50));
  CHECK(d.value == Decimal(1900));
  CHECK(d.weight_now == dec("0.188119"));
  CHECK(d.weight_target.is_zero());
  CHECK(d.reason == "held; z = 0.63 > exit 0.00: sell all");
  REQUIRE(d.lots.size() == 1);
  CHECK(d.lots[0].lot_id == 3);
  CHECK(d.lots[0].est_gain == Decimal(-100));
  const std::vector<std::tuple<std::string, long long, std::string>> buys{
      {"BOND", 20, "sleeve at 20.00%: new position"},
      {"A", 107, "z = -1.26 <= -0.50: new position"},
      {"B", 53, "z = -0.63 <= -0.50: new position"},
      {"C", 22, "held; z = 0.00 <= exit 0.00: add to target"}};
  for (std::size_t i = 0; i < buys.size(); ++i) {
    const auto& o = p.plan.orders[i + 1];
    CHECK(o.side == Side::buy);
    CHECK(o.symbol == std::get<0>(buys[i]));
    CHECK(o.quantity == Decimal(std::get<1>(buys[i])));
    CHECK(o.reason == std::get<2>(buys[i]));
    CHECK(o.account == "Main");
  }
  CHECK(p.plan.orders[2].weight_target == dec("0.266666"));  // 2693.33 / 10100
  // 7900 - 2000 - 2675 - 2650 - 484 = 91.
  CHECK(p.plan.cash_after_total == Decimal(91));
  CHECK(p.plan.turnover == dec("0.480644"));  // (1900 + 7809) / 2 / 10100
  CHECK(p.plan.estimated_fees.is_zero());
  CHECK(p.cautions.size() == 4);
}

TEST_CASE("propose: figures known after the as-of day are not used") {
  Month m;
  const auto p = propose(m.db, month_rule());
  for (const auto& l : p.screen.lines) {
    if (l.symbol == "A") CHECK(l.figure->value == Decimal(6));
    if (l.symbol == "B") CHECK(l.figure->period == day("2024-03-31"));
    if (l.symbol == "G") CHECK(l.excluded_reason == "not positive (-2)");
  }
  // On the later day the restatement and the new period are visible.
  m.closes({{"A", "2024-06-28", "25"}});
  const auto later = propose(m.db, month_rule(), day("2024-06-28"));
  for (const auto& l : later.screen.lines) {
    if (l.symbol == "A") CHECK(l.figure->value == Decimal(30));
    if (l.symbol == "B") CHECK(l.figure->value == Decimal(40));
  }
}

namespace {

// A delisting of `symbol` on 2024-05-15 paying `cash` a unit, as `keel record delisting` stores it.
void delist(Month& m, const std::string& symbol, const char* cash) {
  CorporateAction a;
  a.security_id = store::security_with_symbol(m.db, symbol).id;
  a.date = day("2024-05-15");
  a.kind = ActionKind::delisting;
  a.cash = dec(cash);
  store::WriteTransaction tx(m.db);
  store::insert_action(m.db, a);
  tx.commit();
}

// The month's rule, content with the four names left.
Rule four_names_rule() {
  return month_rule(std::string(kMonthRule) + "\n[screen]\nmin_names = 4\n");
}

}  // namespace

TEST_CASE("propose: a name delisted before the as-of day is screened out and never bought") {
  Month m;
  delist(m, "A", "0");  // the cheapest name, bought in the month worked out above
  const auto p = propose(m.db, four_names_rule());
  const auto line = std::find_if(p.screen.lines.begin(), p.screen.lines.end(),
                                 [](const ScreenLine& l) { return l.symbol == "A"; });
  REQUIRE(line != p.screen.lines.end());
  CHECK(line->excluded_reason == "off the market since 2024-05-15 (merger or delisting)");
  CHECK(p.screen.passed == 4);
  for (const auto& o : p.plan.orders) CHECK(o.symbol != "A");
}

TEST_CASE("propose: a held name delisted before the as-of day is neither held nor sold") {
  Month m;
  delist(m, "D", "41");  // the held name the month above sells: paid 50 x 41 = 2050 instead
  const auto p = propose(m.db, four_names_rule());
  // Pool: cash 6000 + 2050 + C 100 x 22 = 10250.
  CHECK(p.plan.pool_value == Decimal(10250));
  for (const auto& o : p.plan.orders) CHECK(o.symbol != "D");
}

TEST_CASE("propose: posting the orders and proposing again finds nothing to do") {
  Month m;
  const auto first = propose(m.db, month_rule());
  m.post_orders(first);
  const auto again = propose(m.db, month_rule());
  CHECK(again.plan.orders.empty());
  CHECK(again.plan.cash_after_total == Decimal(91));
}

// The month with a euro stock that is the cheapest of all and a rate for it.
struct EuroMonth : Month {
  EuroMonth() {
    stock("EURO", "1", SecurityKind::stock, "EUR");
    closes({{"EURO", "2024-05-31", "3"}});
    figures("pe", {{"EURO", "2024-03-31", "2024-04-30", "1"}});
  }
};

// The month with a euro account of 800 EUR beside the dollar one, under one rule.
struct TwoCurrencies : Month {
  TwoCurrencies() {
    account("Euro", BasisMethod::fifo, false, "EUR");
    cash(TxnKind::deposit, "2024-01-02", "Euro", "800");
  }
  Rule rule() const { return month_rule("[scope]\naccounts = [\"Main\", \"Euro\"]\n"); }
};

TEST_CASE(
    "propose across currencies: a name without a rate on the day is screened out, naming "
    "the pair and the day") {
  EuroMonth m;
  const auto p = propose(m.db, month_rule());
  const auto line = std::find_if(p.screen.lines.begin(), p.screen.lines.end(),
                                 [](const ScreenLine& l) { return l.symbol == "EURO"; });
  REQUIRE(line != p.screen.lines.end());
  CHECK_FALSE(line->passed);
  CHECK(line->excluded_reason == "no exchange rate for EUR/USD on or before 2024-05-31");
  for (const auto& o : p.plan.orders) CHECK(o.symbol != "EURO");
  CHECK(p.conversions.empty());
}

TEST_CASE(
    "propose across currencies: a name in another currency is bought at the day's rate, "
    "settled in the account's currency") {
  EuroMonth m;
  m.fx({{"EUR", "USD", "2024-05-31", "1.1"}, {"EUR", "USD", "2024-06-03", "9"}});
  const auto p = propose(m.db, month_rule());
  CHECK(p.currency == "USD");
  CHECK(p.converted);
  const auto o = std::find_if(p.plan.orders.begin(), p.plan.orders.end(),
                              [](const Order& x) { return x.symbol == "EURO"; });
  REQUIRE(o != p.plan.orders.end());
  // 3 EUR at 1.1 USD per EUR (the rate of 2024-05-31, not the later one).
  CHECK(o->price == dec("3.3"));
  CHECK(o->value == o->quantity * dec("3.3"));
  REQUIRE(o->fx);
  CHECK(o->fx->quote.currency == "EUR");
  CHECK(o->fx->quote.local_price == Decimal(3));
  CHECK(o->fx->quote.rate == dec("1.1"));
  CHECK_FALSE(o->fx->quote.derived);
  CHECK(o->fx->quote.rate_text == "EUR/USD 1.1 (2024-05-31)");
  // No euro cash: all of it settles in dollars.
  CHECK(o->fx->from_cash.is_zero());
  CHECK(o->fx->local_settled == o->quantity * Decimal(3));
  CHECK(o->fx->settles_in == "USD");
  CHECK(o->fx->settled == o->value);
  REQUIRE(p.conversions.size() == 1);
  const auto& c = p.conversions[0];
  CHECK((c.account == "Main" && c.from == "USD" && c.to == "EUR"));
  CHECK(c.amount == o->fx->local_settled);
  CHECK(c.about == o->value);
  // The rule's fee model is 0 + 0 bps: no fee.
  CHECK(c.fee.is_zero());
  for (const auto& x : p.plan.orders)
    if (x.symbol != "EURO") CHECK_FALSE(x.fx);
}

TEST_CASE(
    "propose across currencies: cash in the name's currency pays first, and counts in "
    "the pool at the day's rate") {
  EuroMonth m;
  m.fx({{"EUR", "USD", "2024-01-02", "1.25"}});
  ledger::PostRequest r;
  r.kind = TxnKind::deposit;
  r.date = day("2024-01-02");
  r.account = "Main";
  r.amount = dec("100");
  r.currency = "EUR";
  ledger::post(m.db, r);
  const auto p = propose(m.db, month_rule());
  // The month's 10100 and 100 EUR at 1.25.
  CHECK(p.plan.pool_value == Decimal(10225));
  const auto o = std::find_if(p.plan.orders.begin(), p.plan.orders.end(),
                              [](const Order& x) { return x.symbol == "EURO"; });
  REQUIRE(o != p.plan.orders.end());
  REQUIRE(o->fx);
  CHECK(o->fx->from_cash == Decimal(100));
  CHECK(o->fx->local_settled == o->fx->local_value - Decimal(100));
  REQUIRE(p.conversions.size() == 1);
  CHECK(p.conversions[0].amount == o->fx->local_settled);
}

TEST_CASE(
    "propose across currencies: cash without a rate on the day is left out and never "
    "spent") {
  Month m;
  // Pounds bought at the broker's rate; the ledger has no rate for them.
  ledger::PostRequest r;
  r.kind = TxnKind::exchange;
  r.date = day("2024-01-04");
  r.account = "Main";
  r.amount = dec("100");
  r.to_currency = "GBP";
  r.rate = dec("0.8");
  ledger::post(m.db, r);
  const auto p = propose(m.db, month_rule());
  CHECK(std::find(p.notes.begin(), p.notes.end(),
                  "80 GBP of cash in 'Main' is left out and not spent: no exchange rate for "
                  "GBP/USD on or before 2024-05-31") != p.notes.end());
  // The month's 10100 less the 100 USD exchanged.
  CHECK(p.plan.pool_value == Decimal(10000));
  CHECK(p.conversions.empty());
}

TEST_CASE("propose across currencies: a sleeve without a rate on the day is refused at its key") {
  Month m;
  m.stock("EURO", "1", SecurityKind::fund, "EUR");
  m.closes({{"EURO", "2024-05-31", "3"}});
  CHECK_THROWS_WITH_AS(
      propose(m.db, month_rule("[scope]\naccounts = [\"Main\"]\n[[sleeve]]\nsymbol = \"EURO\"\n"
                               "weight_pct = 10\n")),
      "month.toml:4: key 'sleeve.symbol': sleeve 'EURO': no exchange rate for EUR/USD on or "
      "before 2024-05-31",
      InputError);
}

TEST_CASE(
    "propose across currencies: accounts in two currencies are valued in the first "
    "account's, or in the one asked") {
  TwoCurrencies m;
  const auto rule = m.rule();
  CHECK_THROWS_WITH_AS(propose(m.db, rule),
                       "account 'Euro' keeps EUR and the proposal is valued in USD: no exchange "
                       "rate for EUR/USD on or before 2024-05-31; import one with 'keel import fx "
                       "FILE.csv'",
                       InputError);
  m.fx({{"EUR", "USD", "2024-05-31", "1.25"}});
  // 10100 USD and 800 EUR at 1.25.
  CHECK(propose(m.db, rule).plan.pool_value == Decimal(11100));
  const auto in_euros = propose(m.db, rule, std::nullopt, {}, "EUR");
  CHECK(in_euros.currency == "EUR");
  // 10100 USD at 0.8 and 800 EUR.
  CHECK(in_euros.plan.pool_value == Decimal(8880));
}

TEST_CASE("propose across currencies: a saved order keeps the name's own price") {
  EuroMonth m;
  m.fx({{"EUR", "USD", "2024-05-31", "1.1"}});
  const auto p = propose(m.db, month_rule());
  const auto o = std::find_if(p.plan.orders.begin(), p.plan.orders.end(),
                              [](const Order& x) { return x.symbol == "EURO"; });
  REQUIRE(o != p.plan.orders.end());
  CHECK(proposal_order_row(*o).price == Decimal(3));
}

TEST_CASE("regression: fills recorded after the latest close were proposed again") {
  Month m;
  const auto first = propose(m.db, month_rule());
  REQUIRE_FALSE(first.plan.orders.empty());
  m.post_orders(first, day("2024-06-03"));  // filled after the latest close (2024-05-31)
  const auto again = propose(m.db, month_rule());
  CHECK(again.as_of == day("2024-06-03"));
  CHECK(again.plan.orders.empty());
  CHECK(again.notes.front() ==
        "as of 2024-06-03, the day of the latest transaction in the rule's accounts, after the "
        "latest close (2024-05-31): what was traded since that close is valued at its trade price");
}

TEST_CASE("propose: fills at other prices are valued at those prices and not proposed again") {
  Month m;
  const auto first = propose(m.db, month_rule());
  m.post_orders(first, day("2024-06-03"), "0.98");  // filled 2% below the estimates
  const auto again = propose(m.db, month_rule());
  // What the cheaper fills left in cash may be topped up (here A 2, B 1, C 1), but no
  // filled order comes back: no sell again, no buy near the size of one filled.
  for (const auto& o : again.plan.orders)
    for (const auto& done : first.plan.orders)
      if (o.account == done.account && o.symbol == done.symbol) {
        CHECK(o.side == Side::buy);
        CHECK(o.quantity * Decimal(10) < done.quantity);
      }
  CHECK(std::find(again.notes.begin(), again.notes.end(),
                  "A: valued at its trade price 24.5 of 2024-06-03, later than its latest close "
                  "(2024-05-31)") != again.notes.end());
}

TEST_CASE("propose: a given as-of before recorded transactions says they are left out") {
  Month m;
  m.post_orders(propose(m.db, month_rule()), day("2024-06-03"));
  const auto back = propose(m.db, month_rule(), day("2024-05-31"));
  CHECK(std::find_if(back.notes.begin(), back.notes.end(), [](const std::string& n) {
          return n.find(
                     "in the rule's accounts are dated after 2024-05-31 and not taken into "
                     "account: this proposal may repeat orders already filled") !=
                 std::string::npos;
        }) != back.notes.end());
}

TEST_CASE("propose: an account the ledger does not hold is named at its key") {
  Month m;
  CHECK_THROWS_WITH_AS(propose(m.db, month_rule("[scope]\naccounts = [\"Nope\"]\n")),
                       "month.toml:2: key 'scope.accounts': no account named 'Nope' in the "
                       "ledger (accounts: Main)",
                       InputError);
}

TEST_CASE("propose: a metric with no data is refused with the nearest stored one") {
  Month m;
  CHECK_THROWS_WITH_AS(
      propose(m.db, month_rule("[scope]\naccounts = [\"Main\"]\n[screen]\nmetric = \"pee\"\n")),
      "month.toml:4: key 'screen.metric': the ledger holds no figures for metric 'pee'; did you "
      "mean 'pe'?",
      InputError);
}

TEST_CASE("propose: an unknown symbol or sector is named at its key") {
  Month m;
  CHECK_THROWS_WITH_AS(
      propose(m.db, month_rule("[scope]\naccounts = [\"Main\"]\nsymbols = [\"A\", \"QQ\"]\n")),
      "month.toml:3: key 'scope.symbols': no security 'QQ' in the ledger", InputError);
  CHECK_THROWS_WITH_AS(
      propose(m.db, month_rule("[scope]\naccounts = [\"Main\"]\nsector = \"Power\"\n")),
      "month.toml:3: key 'scope.sector': no stock in the ledger has sector 'Power'", InputError);
}

TEST_CASE("propose: an empty pool is refused") {
  Month m;
  m.account("Empty");
  CHECK_THROWS_WITH_AS(propose(m.db, month_rule("[scope]\naccounts = [\"Empty\"]\n")),
                       "month.toml:2: key 'scope.accounts': the accounts Empty hold nothing to "
                       "invest on 2024-05-31 (value 0); deposit cash first",
                       InputError);
}

TEST_CASE("propose: reading and saving leave the rest of the ledger as it was") {
  Month m;
  const std::string before = m.dump();
  const auto p = propose(m.db, month_rule());
  CHECK(m.dump() == before);
  const Rule r = month_rule();
  const auto id = save(m.db, r, p);
  CHECK(id == 1);
  const auto row = store::find_proposal(m.db, id);
  REQUIRE(row);
  CHECK(row->rule_text == kMonthRule);
  CHECK(row->rule_sha256.size() == 64);
  CHECK(row->orders.size() == 5);
  CHECK(row->orders[0].lots.size() == 1);
}

TEST_CASE("propose: planned cash moves the rule's cash for the orders and is never booked") {
  Month m;
  const std::string before = m.dump();
  const auto plain = propose(m.db, month_rule());
  const auto p =
      propose(m.db, month_rule(), std::nullopt, {parse_planned_cash("--deposit", "1000")});
  CHECK(m.dump() == before);
  REQUIRE(p.planned.size() == 1);
  CHECK(p.planned[0].account == "Main");  // a bare amount goes to the rule's one account
  CHECK(p.plan.pool_value == plain.plan.pool_value + dec("1000"));
}

TEST_CASE("review: planned cash is kept and set against the deposits booked since") {
  Month m;
  const Rule r = month_rule();
  const auto p = propose(m.db, r, std::nullopt, {parse_planned_cash("--deposit", "Main=1000")});
  const auto id = save(m.db, r, p);
  const auto row = store::find_proposal(m.db, id);
  REQUIRE(row->cash.size() == 1);
  CHECK(row->cash[0].account == "Main");
  CHECK(row->cash[0].amount == dec("1000"));
  auto rv = review(m.db, id);
  REQUIRE(rv.cash.size() == 1);
  CHECK(rv.cash[0].status == "not booked");
  m.cash(TxnKind::deposit, "2024-06-03", "Main", "400");
  m.cash(TxnKind::withdrawal, "2024-06-03", "Main", "50");  // the other way: not counted
  rv = review(m.db, id);
  CHECK(rv.cash[0].booked == dec("400"));
  CHECK(rv.cash[0].status == "partly");
  m.cash(TxnKind::deposit, "2024-06-04", "Main", "600");
  CHECK(review(m.db, id).cash[0].status == "booked");
}

TEST_CASE("saved proposal: planned cash cannot be changed or deleted") {
  Month m;
  const Rule r = month_rule();
  const auto id =
      save(m.db, r, propose(m.db, r, std::nullopt, {parse_planned_cash("--withdraw", "Main=100")}));
  CHECK(store::find_proposal(m.db, id)->cash[0].amount == dec("-100"));
  CHECK_THROWS_AS(m.db.sql().exec("UPDATE proposal_cash SET amount = '-1'"), SQLite::Exception);
  CHECK_THROWS_AS(m.db.sql().exec("DELETE FROM proposal_cash"), SQLite::Exception);
}

TEST_CASE("review: proposed orders against the trades posted since") {
  Month m;
  const Rule r = month_rule();
  const auto p = propose(m.db, r);
  const auto id = save(m.db, r, p);
  m.sell("2024-06-03", "Main", "D", "50", "38.5");
  m.buy("2024-06-03", "Main", "A", "100", "25.1");
  m.buy("2024-06-03", "Main", "E", "10", "10");
  const auto rv = review(m.db, id);
  REQUIRE(rv.lines.size() == 6);
  CHECK(rv.lines[0].symbol == "D");
  CHECK(rv.lines[0].status == "done");
  CHECK(*rv.lines[0].avg_price == dec("38.5"));
  CHECK(rv.lines[1].symbol == "BOND");
  CHECK(rv.lines[1].status == "not traded");
  CHECK(rv.lines[2].symbol == "A");
  CHECK(rv.lines[2].status == "partly");
  CHECK(rv.lines[2].traded == Decimal(100));
  CHECK(rv.lines[5].symbol == "E");
  CHECK(rv.lines[5].status == "not proposed");
  CHECK(rv.lines[5].proposed.is_zero());
  CHECK_THROWS_WITH_AS(review(m.db, 7), "no saved proposal 7; see 'keel proposals list'",
                       InputError);
}

// ------------------------------------------------------- property checks

namespace {

struct Rng {
  std::uint64_t s;
  std::uint64_t next() {
    s = s * 6364136223846793005ULL + 1442695040888963407ULL;
    return s >> 33;
  }
  int range(int lo, int hi) { return lo + static_cast<int>(next() % (hi - lo + 1)); }
};

const char* kVariants[] = {
    // equal weights by z, fees, a reserve, a drift band
    R"([scope]
accounts = ["Taxable", "Retirement"]
[screen]
min_names = 10
[select]
z_max = -0.3
exit_z = 0.3
[trading]
fee_fixed = 1
fee_bps = 5
cash_reserve_pct = 1.5
lot_order = "losses-first"
)",
    // a tilt with a cap, by count, no band, larger fees
    R"([scope]
accounts = ["Taxable", "Retirement"]
[select]
by = "count"
count = 12
[weights]
scheme = "tilt"
tilt = 0.7
max_weight_pct = 12
[[sleeve]]
symbol = "FUND"
weight_pct = 15
[trading]
fee_fixed = 4.95
fee_bps = 10
lot_order = "long-held"
)",
    // top share, a minimum trade, fractional units
    R"([scope]
accounts = ["Taxable", "Retirement"]
[screen]
cheap = "high"
winsorize_pct = [5, 95]
[select]
by = "top_pct"
top_pct = 30
[trading]
min_trade = 250
fractional = true
fee_bps = 3
drift_pct_points = 0.5
)",
};

struct Generated : Market {
  explicit Generated(std::uint64_t seed) {
    Rng rng{seed};
    account("Taxable");
    account("Retirement");
    for (int i = 0; i < 40; ++i) stock(fmt::format("S{:02d}", i), i % 7 == 3 ? "5" : "1");
    stock("FUND", "1", SecurityKind::fund);
    cash(TxnKind::deposit, "2024-01-02", "Taxable",
         std::to_string(rng.range(20000, 90000)).c_str());
    cash(TxnKind::deposit, "2024-01-02", "Retirement",
         std::to_string(rng.range(5000, 40000)).c_str());
    std::vector<std::tuple<std::string, std::string, std::string>> prices;
    std::vector<std::tuple<std::string, std::string, std::string, std::string>> pe;
    for (int i = 0; i < 40; ++i) {
      const std::string sym = fmt::format("S{:02d}", i);
      prices.push_back(
          {sym, "2024-01-03", fmt::format("{}.{:02d}", rng.range(5, 300), rng.range(0, 99))});
      prices.push_back(
          {sym, "2024-05-31", fmt::format("{}.{:02d}", rng.range(5, 300), rng.range(0, 99))});
      pe.push_back({sym, "2024-03-31", "2024-04-30",
                    fmt::format("{}.{}", rng.range(-5, 45), rng.range(0, 9))});
    }
    prices.push_back({"FUND", "2024-01-03", "50"});
    prices.push_back({"FUND", "2024-05-31", "51.37"});
    closes(prices);
    figures("pe", pe);
    // Earlier buys at January's prices, in both accounts and in several lots.
    for (int k = 0; k < 12; ++k) {
      const int i = rng.range(0, 39);
      const std::string sym = fmt::format("S{:02d}", i);
      const std::string price = std::get<2>(prices[2 * static_cast<std::size_t>(i)]);
      const char* acct = k % 3 == 0 ? "Retirement" : "Taxable";
      const int qty = (i % 7 == 3 ? 5 : 1) * rng.range(1, 6);
      buy(fmt::format("2024-01-{:02d}", 3 + k).c_str(), acct, sym, std::to_string(qty).c_str(),
          price.c_str(), "1");
    }
  }
};

// Runs `check(ledger, rule)` on eight generated ledgers with each variant rule.
template <typename Check>
void each_generated(Check check) {
  for (std::uint64_t seed = 1; seed <= 8; ++seed)
    for (const char* text : kVariants) {
      CAPTURE(seed);
      CAPTURE(text);
      Generated g(seed);
      check(g, parse_rule(text, "p.toml"));
    }
}

// A proposal that should find nothing: each order it still makes, for the log.
void expect_at_rest(const Proposal& again) {
  CHECK(again.plan.orders.empty());
  for (const auto& o : again.plan.orders)
    MESSAGE(o.account << " " << o.symbol << " " << std::string(to_string(o.side)) << " "
                      << o.quantity.str() << ": " << o.reason);
}

}  // namespace

TEST_CASE("property: no proposal overspends or oversells, and a second one finds nothing") {
  each_generated([](Generated& g, const Rule& r) {
    const auto p = propose(g.db, r);
    REQUIRE_FALSE(p.plan.orders.empty());
    // Sells never exceed holdings; cash after is never below zero.
    const Book book = g.book();
    std::map<std::pair<std::int64_t, std::int64_t>, Decimal> sold;
    for (const auto& o : p.plan.orders)
      if (o.side == Side::sell) sold[{o.account_id, o.security_id}] += o.quantity;
    for (const auto& [key, qty] : sold) {
      const auto& positions = book.account(key.first).positions;
      REQUIRE(positions.count(key.second));
      CHECK(qty <= positions.at(key.second).quantity());
    }
    for (const auto& c : p.plan.cash_after) CHECK_FALSE(c.cash.is_negative());
    // Posting the orders is accepted by the ledger's own guard rails.
    g.post_orders(p);
    expect_at_rest(propose(g.db, r));
  });
}

TEST_CASE("propose: a sell at a loss is flagged just inside the repurchase window, not outside") {
  for (const auto& [window, flagged] : std::vector<std::pair<int, bool>>{{21, true}, {20, false}}) {
    Month m;
    m.account("Other");
    m.cash(TxnKind::deposit, "2024-01-02", "Other", "1000");
    m.buy("2024-05-10", "Other", "D", "5", "37");
    auto p = propose(m.db, month_rule());
    const auto cautions = p.cautions.size();
    flag_repurchases(m.db, p, window);
    const auto& d = p.plan.orders[0];
    REQUIRE(d.symbol == "D");
    if (flagged) {
      CHECK(d.reason ==
            "held; z = 0.63 > exit 0.00: sell all; sold at an estimated loss and bought on "
            "2024-05-10 in Other, within 21 days: the loss may be disallowed under local rules");
      REQUIRE(p.cautions.size() == cautions + 1);
      CHECK(p.cautions.back().find("licensed professional") != std::string::npos);
    } else {
      CHECK(d.reason == "held; z = 0.63 > exit 0.00: sell all");
      CHECK(p.cautions.size() == cautions);
    }
  }
}

TEST_CASE(
    "property: a withdrawal is raised, no name is both sold and bought without the reason, "
    "and booking it all leaves nothing to propose") {
  int raised = 0;
  each_generated([&raised](Generated& g, const Rule& r) {
    // Retirement (account 2) gives its cash and 300 more, raised by selling in it.
    const Decimal gives = g.book().account(2).cash + dec("300");
    Proposal p;
    try {
      p = propose(g.db, r, std::nullopt,
                  {parse_planned_cash("--withdraw", "Retirement=" + gives.fixed(2))});
    } catch (const InputError& e) {
      MESSAGE(e.what());  // too little held in Retirement to raise it
      return;
    }
    ++raised;
    for (const auto& c : p.plan.cash_after) CHECK_FALSE(c.cash.is_negative());
    std::map<std::int64_t, std::set<Side>> sides;
    for (const auto& o : p.plan.orders) sides[o.security_id].insert(o.side);
    for (const auto& o : p.plan.orders)
      if (sides[o.security_id].size() == 2 && o.side == Side::buy)
        CHECK(o.reason.find("sells to raise the cash it must give") != std::string::npos);
    g.post_orders(p);  // the sells first: the ledger checks each posting's cash
    ledger::PostRequest w;
    w.kind = TxnKind::withdrawal;
    w.date = p.as_of;
    w.account = "Retirement";
    w.amount = gives;
    ledger::post(g.db, w);
    expect_at_rest(propose(g.db, r));
  });
  CHECK(raised > 8);
}

TEST_CASE(
    "regression: planned cash for an account in another currency was taken in the "
    "proposal's") {
  TwoCurrencies m;
  m.fx({{"EUR", "USD", "2024-05-31", "1.25"}});
  const auto rule = m.rule();
  const auto p = propose(m.db, rule, std::nullopt, {parse_planned_cash("--deposit", "Euro=100")});
  // 10100 USD, 800 EUR and the planned 100 EUR, at 1.25.
  CHECK(p.plan.pool_value == Decimal(11225));
  REQUIRE(p.planned.size() == 1);
  CHECK(p.planned[0].currency == "EUR");
  CHECK(p.planned[0].converted == Decimal(125));
  // A withdrawal gives its amount in euros too.
  const auto w = propose(m.db, rule, std::nullopt, {parse_planned_cash("--withdraw", "Euro=80")});
  CHECK(w.plan.pool_value == Decimal(11000));
  CHECK(w.planned[0].converted == Decimal(-100));
}

TEST_CASE(
    "regression: with no cash reserve, a conversion's fee left the account short of its own "
    "cash") {
  Market m;
  m.account("Main");
  m.cash(TxnKind::deposit, "2024-01-02", "Main", "1000");
  m.stock("EUF", "1", SecurityKind::stock, "EUR");
  m.stock("U1");
  m.stock("U2");
  m.closes({{"EUF", "2024-05-31", "1"}, {"U1", "2024-05-31", "10"}, {"U2", "2024-05-31", "10"}});
  m.figures("pe", {{"EUF", "2024-03-31", "2024-04-30", "5"},
                   {"U1", "2024-03-31", "2024-04-30", "10"},
                   {"U2", "2024-03-31", "2024-04-30", "15"}});
  m.fx({{"EUR", "USD", "2024-05-31", "1.1"}});
  const auto p = propose(
      m.db, month_rule("[scope]\naccounts = [\"Main\"]\n[screen]\nmin_names = 3\n[select]\nby = "
                       "\"count\"\ncount = 1\n[trading]\nfee_fixed = 5\n"));
  // EUF is 1 EUR at 1.1 USD. Sized without the conversion, 904 units (994.40 USD) and the
  // order's fee (5) left 0.60, and the conversion's fee (5) took the account 4.40 short.
  // Inside the sizing: 900 units, 990 USD, the order's fee and the conversion's, 0 left.
  REQUIRE(p.plan.orders.size() == 1);
  CHECK(p.plan.orders[0].quantity == Decimal(900));
  CHECK(p.plan.orders[0].value == Decimal(990));
  REQUIRE(p.conversions.size() == 1);
  CHECK(p.conversions[0].amount == Decimal(900));
  CHECK(p.conversions[0].fee == Decimal(5));
  REQUIRE(p.plan.cash_after.size() == 1);
  CHECK(p.plan.cash_after[0].cash == Decimal(0));
  CHECK(p.plan.estimated_fees == Decimal(10));
  for (const auto& n : p.notes) CHECK(n.find("short") == std::string::npos);
}

TEST_CASE(
    "regression: a track record over names in another currency stopped with an internal "
    "error") {
  EuroMonth m;
  m.fx({{"EUR", "USD", "2024-01-02", "1.1"}});
  // One month of figures is too short a record: the rule's own refusal, where the record's
  // market data lacked the exchange rates before (std::out_of_range).
  CHECK_THROWS_WITH_AS(
      propose(m.db, month_rule(std::string(kMonthRule) +
                               "[track_record]\nwindow_months = 6\nhorizon_months = 1\n"
                               "min_observations = 3\n")),
      "month.toml: key 'track_record.max_correlation' (default 0): selects no name on "
      "2024-05-31: all 6 names passing the screen fail the track record (fewer than 3 "
      "observations, or a correlation above 0.00)",
      InputError);
}
