// Plans: reading a plan file (pools, shares, parts, their refusals) and
// proposing its parts together (attribution of held names, unmanaged
// holdings, planned cash). Every name is invented.
#include <doctest/doctest.h>
#include <stdlib.h>

#include <filesystem>
#include <fstream>

#include "core/error.h"
#include "ledger_fixture.h"
#include "rules/plan.h"
#include "rules/plan_propose.h"
#include "rules/propose.h"

using namespace keel;
using namespace keel::testing;
using namespace keel::rules;

namespace {

// A scratch folder for rule files, removed afterwards.
struct Folder {
  std::filesystem::path path;
  Folder() {
    std::string tmpl = (std::filesystem::temp_directory_path() / "keel-plan-XXXXXX").string();
    path = mkdtemp(tmpl.data());
  }
  ~Folder() { std::filesystem::remove_all(path); }
  void write(const std::string& name, const std::string& text) const {
    std::ofstream(path / name) << text;
  }
};

const char* kValueRule = R"([scope]
accounts = ["Taxable"]
symbols = ["A", "B", "C", "D", "E"]
[select]
by = "count"
count = 2
)";

const char* kTwoParts = R"(name = "Household"
[pools.family]
accounts = ["Taxable", "Retirement"]

[[part]]
rule = "value.toml"
pool = "family"
share_pct = 70

[[part]]
name = "bonds"
pool = "family"
share_pct = 30
fixed = { BOND = 60, GILT = 40 }
)";

void refused(const Folder& f, const std::string& text, const std::string& message) {
  CHECK_THROWS_WITH_AS(parse_plan(text, "plan.toml", f.path), message.c_str(), InputError);
}

}  // namespace

TEST_CASE("plan file: a pool shared by a rule and a fixed sleeve") {
  Folder f;
  f.write("value.toml", kValueRule);
  const Plan plan = parse_plan(kTwoParts, "plan.toml", f.path);
  CHECK(plan.name == "Household");
  REQUIRE(plan.pools.size() == 1);
  CHECK(plan.pools[0].accounts == std::vector<std::string>{"Taxable", "Retirement"});
  CHECK_FALSE(plan.pools[0].sell_unmanaged);
  REQUIRE(plan.parts.size() == 2);
  CHECK(plan.parts[0].name == "value");  // the rule file's name
  CHECK(plan.parts[0].share == dec("0.7"));
  CHECK(plan.parts[0].rule->selection.count == 2);
  CHECK(plan.parts[1].name == "bonds");
  CHECK(plan.parts[1].share == dec("0.3"));
  REQUIRE(plan.parts[1].fixed.size() == 2);
  CHECK(plan.parts[1].fixed[0].symbol == "BOND");
  CHECK(plan.parts[1].fixed[0].weight == dec("0.6"));
}

TEST_CASE("plan file: a rule path is read relative to the plan file's folder") {
  Folder f;
  std::filesystem::create_directory(f.path / "rules");
  f.write("rules/value.toml", kValueRule);
  const Plan plan = parse_plan("[[part]]\nrule = \"rules/value.toml\"\n", "plan.toml", f.path);
  CHECK(plan.parts[0].rule->source == (f.path / "rules/value.toml").string());
}

TEST_CASE("plan file: a part without a pool keeps its rule's accounts in a pool of its own") {
  Folder f;
  f.write("value.toml", kValueRule);
  const Plan plan = parse_plan("[[part]]\nrule = \"value.toml\"\n", "plan.toml", f.path);
  REQUIRE(plan.pools.size() == 1);
  CHECK(plan.pools[0].own);
  CHECK(plan.pools[0].name == "value");
  CHECK(plan.pools[0].accounts == std::vector<std::string>{"Taxable"});
  CHECK(plan.parts[0].share == Decimal(1));
}

TEST_CASE("plan file: shares of one pool that do not sum to 100% are refused at the last share") {
  Folder f;
  f.write("value.toml", kValueRule);
  std::string text = kTwoParts;
  text.replace(text.find("share_pct = 30"), 14, "share_pct = 20");
  refused(f, text,
          "plan.toml:13:13: key 'part.share_pct': the shares of pool 'family' sum to 90%, not "
          "100% (value 70%, bonds 20%)");
}

TEST_CASE("plan file: fixed weights that do not sum to 100% are refused") {
  Folder f;
  refused(f,
          "[pools.p]\naccounts = [\"X\"]\n[[part]]\nname = \"s\"\npool = \"p\"\nshare_pct = "
          "100\nfixed = { BOND = 60, GILT = 30 }\n",
          "plan.toml:7:9: key 'part.fixed': the weights sum to 90%, not 100%");
}

TEST_CASE("plan file: an unknown key suggests the nearest valid key") {
  Folder f;
  refused(f, "[[part]]\nname = \"s\"\nshare_pc = 10\n",
          "plan.toml:3:12: key 'part.share_pc': unknown key; did you mean 'share_pct'?");
}

TEST_CASE("plan file: an unknown pool is refused with the nearest pool") {
  Folder f;
  refused(f,
          "[pools.family]\naccounts = [\"X\"]\n[[part]]\nname = \"s\"\npool = \"famly\"\n"
          "share_pct = 100\nfixed = { BOND = 100 }\n",
          "plan.toml:5:8: key 'part.pool': no pool named 'famly'; did you mean 'family'?");
}

TEST_CASE("plan file: an account in two pools is refused") {
  Folder f;
  refused(f, "[pools.a]\naccounts = [\"X\"]\n[pools.b]\naccounts = [\"Y\", \"X\"]\n",
          "plan.toml:4:12: key 'pools.b.accounts': account 'X' is already managed by pool 'a'; "
          "an account belongs to one pool or part only");
}

TEST_CASE("plan file: a part that is both a rule and a fixed sleeve is refused") {
  Folder f;
  refused(f, "[[part]]\nrule = \"value.toml\"\nfixed = { BOND = 100 }\n",
          "plan.toml:3:9: key 'part.fixed': a part is either a rule file (rule) or a fixed "
          "sleeve, not both");
}

TEST_CASE("plan file: a share without a pool is refused") {
  Folder f;
  f.write("value.toml", kValueRule);
  refused(f, "[[part]]\nrule = \"value.toml\"\nshare_pct = 50\n",
          "plan.toml:3:13: key 'part.share_pct': applies only with pool; a part with accounts of "
          "its own manages all of them");
}

TEST_CASE("plan file: not valid TOML names the line and column") {
  Folder f;
  CHECK_THROWS_WITH_AS(parse_plan("[[part]\n", "plan.toml", f.path),
                       doctest::Contains("plan.toml:1:"), InputError);
}

namespace {

// The household: a taxable and a retirement account; five scored stocks, two
// bond funds and a mixed fund that no part manages.
struct Household : LedgerFixture {
  Folder f;
  Household() {
    account("Taxable");
    account("Retirement");
    for (const char* s : {"A", "B", "C", "D", "E"}) security(s);
    security("BOND", SecurityKind::bond);
    security("GILT", SecurityKind::bond);
    security("MIX", SecurityKind::fund);
    cash(TxnKind::deposit, "2026-01-02", "Taxable", "6000");
    cash(TxnKind::deposit, "2026-01-02", "Retirement", "4000");
    buy("2026-01-05", "Taxable", "C", "10", "100");      // C: in the universe, not selected
    buy("2026-01-05", "Retirement", "MIX", "10", "50");  // MIX: outside every part
    closes({{"A", "2026-01-30", "10"},
            {"B", "2026-01-30", "20"},
            {"C", "2026-01-30", "100"},
            {"D", "2026-01-30", "10"},
            {"E", "2026-01-30", "10"},
            {"BOND", "2026-01-30", "100"},
            {"GILT", "2026-01-30", "50"},
            {"MIX", "2026-01-30", "60"}});
    figures("pe", {{"A", "2025-12-31", "2026-01-15", "5"},
                   {"B", "2025-12-31", "2026-01-15", "6"},
                   {"C", "2025-12-31", "2026-01-15", "9"},
                   {"D", "2025-12-31", "2026-01-15", "12"},
                   {"E", "2025-12-31", "2026-01-15", "15"}});
    f.write("value.toml", kValueRule);
  }
  PlanProposal run(const std::string& text, std::vector<PlannedCash> planned = {}) {
    return propose_plan(db, parse_plan(text, "plan.toml", f.path), std::nullopt,
                        std::move(planned));
  }
};

}  // namespace

TEST_CASE("plan: a held name is sold only by the part whose universe holds it") {
  Household h;
  const auto p = h.run(kTwoParts);
  REQUIRE(p.parts.size() == 2);
  // C (pe 9) is in the value universe but not among the two cheapest: the
  // value part sells it; the sleeve part has no order for it.
  REQUIRE_FALSE(p.parts[0].orders.empty());
  CHECK(p.parts[0].orders[0].symbol == "C");
  CHECK(p.parts[0].orders[0].side == Side::sell);
  CHECK(p.parts[0].orders[0].reason.rfind("value: ", 0) == 0);
  for (const auto& o : p.parts[1].orders) CHECK(o.symbol != "C");
}

TEST_CASE("plan: a name outside every part is unmanaged, valued and never sold") {
  Household h;
  const auto p = h.run(kTwoParts);
  REQUIRE(p.unmanaged.size() == 1);
  CHECK(p.unmanaged[0].symbol == "MIX");
  CHECK(p.unmanaged[0].account == "Retirement");
  CHECK(p.unmanaged[0].value == dec("600"));  // 10 x 60
  CHECK_FALSE(p.unmanaged[0].sold);
  for (const auto& o : p.pools[0].plan.orders) CHECK(o.symbol != "MIX");
  // Managed value: 6000 - 1000 + 4000 - 500 cash, C 10 x 100: 9500, MIX left out.
  CHECK(p.pools[0].plan.pool_value == dec("9500"));
}

TEST_CASE("plan: unmanaged = \"sell\" sells names outside every part") {
  Household h;
  std::string text = kTwoParts;
  text.replace(text.find("\n\n[[part]]"), 0, "\nunmanaged = \"sell\"");
  const auto p = h.run(text);
  CHECK(p.pools[0].plan.pool_value == dec("10100"));  // 9500 + MIX 600
  bool sold = false;
  for (const auto& o : p.pools[0].plan.orders)
    if (o.symbol == "MIX") sold = o.side == Side::sell && o.quantity == dec("10");
  CHECK(sold);
}

TEST_CASE("plan: a security in two parts of one pool is refused naming both") {
  Household h;
  std::string text = kTwoParts;
  text.replace(text.find("BOND = 60"), 9, "C = 60");
  CHECK_THROWS_WITH_AS(h.run(text),
                       "plan.toml:14:9: key 'part.fixed': 'C' is managed by both part 'value' "
                       "and part 'bonds' in pool 'family'; a security belongs to one part of a "
                       "pool",
                       InputError);
}

TEST_CASE("plan: planned cash moves the account's cash and is only stated") {
  Household h;
  const auto p = h.run(kTwoParts, {parse_planned_cash("--deposit", "Retirement=500")});
  CHECK(p.pools[0].plan.pool_value == dec("10000"));  // 9500 + 500
  REQUIRE(p.planned.size() == 1);
  CHECK(p.planned[0].account == "Retirement");
  CHECK(p.planned[0].amount == dec("500"));
}

TEST_CASE("plan: planned cash without an account is refused when the plan has several") {
  Household h;
  CHECK_THROWS_WITH_AS(h.run(kTwoParts, {parse_planned_cash("--deposit", "500")}),
                       "--deposit: the plan has 2 accounts; name the one the cash goes to or "
                       "comes from (ACCOUNT=AMOUNT; accounts: Taxable, Retirement)",
                       InputError);
}

TEST_CASE("planned cash: an amount that is not above zero with cents is refused") {
  CHECK_THROWS_WITH_AS(parse_planned_cash("--withdraw", "Taxable=-5"),
                       "--withdraw: '-5' is not an amount above zero with at most two decimals "
                       "(ACCOUNT=AMOUNT, e.g. Savings=1500.00)",
                       InputError);
  CHECK(parse_planned_cash("--withdraw", "Taxable=12.5").amount == dec("-12.5"));
}

TEST_CASE("planned cash: ACCOUNT=AMOUNT splits at the last '='") {
  const auto c = parse_planned_cash("--deposit", "A=B=250.00");
  CHECK(c.account == "A=B");
  CHECK(c.amount == dec("250"));
}

TEST_CASE("planned cash: the spelling AMOUNT:ACCOUNT is refused showing the form to use") {
  CHECK_THROWS_WITH_AS(parse_planned_cash("--deposit", "1500:Savings"),
                       "--deposit: '1500:Savings' is not ACCOUNT=AMOUNT; write 'Savings=1500'",
                       InputError);
}

TEST_CASE("planned cash: no account before '=' is refused") {
  CHECK_THROWS_WITH_AS(parse_planned_cash("--deposit", "=100"),
                       "--deposit: '=100' names no account before '=' (ACCOUNT=AMOUNT, e.g. "
                       "Savings=1500.00)",
                       InputError);
}

TEST_CASE("plan: a deposit into a near miss of a plan account suggests it") {
  Household h;
  CHECK_THROWS_WITH_AS(h.run(kTwoParts, {parse_planned_cash("--deposit", "Retirment=100")}),
                       "--deposit: 'Retirment' is not an account of the plan (did you mean "
                       "'Retirement'?)",
                       InputError);
}

TEST_CASE("saved plan: each order keeps its part and the review covers the plan's accounts") {
  Household h;
  const Plan plan = parse_plan(kTwoParts, "plan.toml", h.f.path);
  const auto p = propose_plan(h.db, plan);
  const std::int64_t id = save_plan(h.db, plan, p);
  const auto r = review(h.db, id);
  CHECK(r.proposal.kind == "plan");
  CHECK(r.proposal.rule_name == "Household");
  CHECK(r.proposal.rule_text == kTwoParts);
  CHECK(r.proposal.account_ids.size() == 2);
  std::size_t orders = 0;
  for (const auto& pool : p.pools) orders += pool.plan.orders.size();
  REQUIRE(r.lines.size() == orders);
  for (std::size_t i = 0; i < r.lines.size(); ++i) {
    const auto& o = p.pools[0].plan.orders[i];
    CHECK(r.lines[i].part == o.reason.substr(0, o.reason.find(':')));
    CHECK(r.lines[i].status == "not traded");
  }
  // A trade in the retirement account after saving is listed as not proposed.
  h.buy("2026-02-02", "Retirement", "E", "1", "10");
  const auto later = review(h.db, id);
  CHECK(later.lines.back().symbol == "E");
  CHECK(later.lines.back().status == "not proposed");
  CHECK(later.lines.back().part.empty());
}

namespace {

// The household with a euro account beside the dollar one, and a euro bond
// fund: 1 EUR buys 1.25 USD on the as-of day.
struct EuroHousehold : Household {
  EuroHousehold() {
    account("Depot", BasisMethod::fifo, false, "EUR");
    cash(TxnKind::deposit, "2026-01-02", "Depot", "2000");
    Security s;
    s.symbol = "EBND";
    s.name = "EBND (invented)";
    s.kind = SecurityKind::bond;
    s.currency = "EUR";
    store::insert_security(db, s);
    closes({{"EBND", "2026-01-30", "80"}});
  }
  void rate() { fx({{"EUR", "USD", "2026-01-30", "1.25"}}); }
};

const char* kEuroPlan = R"(name = "Two currencies"
[pools.home]
accounts = ["Taxable", "Depot"]

[[part]]
name = "bonds"
pool = "home"
share_pct = 100
fixed = { BOND = 50, EBND = 50 }
)";

const Order* order_of(const PoolResult& pool, const std::string& account,
                      const std::string& symbol) {
  for (const auto& o : pool.plan.orders)
    if (o.account == account && o.symbol == symbol) return &o;
  return nullptr;
}

}  // namespace

TEST_CASE("plan across currencies: an account without a rate on the day is refused naming it") {
  EuroHousehold h;
  CHECK_THROWS_WITH_AS(h.run(kEuroPlan),
                       "account 'Depot' keeps EUR and the proposal is valued in USD: no exchange "
                       "rate for EUR/USD on or before 2026-01-30; import one with 'keel import "
                       "fx FILE.csv'",
                       InputError);
}

TEST_CASE("plan across currencies: a pool of two currencies is valued at the day's rate") {
  EuroHousehold h;
  h.rate();
  const auto p = h.run(kEuroPlan);
  REQUIRE(p.pools.size() == 1);
  const auto& pool = p.pools[0];
  // The ledger has no currency of its own: the first account's, dollars.
  CHECK(pool.currency == "USD");
  CHECK(pool.converted);
  // Taxable's 5000 USD (C, outside the plan, is unmanaged) and Depot's 2000
  // EUR at 1.25.
  CHECK(pool.plan.pool_value == dec("7500"));
  // EBND at 80 EUR is 100 USD; its half, 3750 USD, buys it where the cash
  // is: Depot's 2500 USD (25 units), then 12 units in Taxable.
  const Order* depot = order_of(pool, "Depot", "EBND");
  REQUIRE(depot);
  CHECK(depot->quantity == dec("25"));
  CHECK(depot->price == dec("100"));
  REQUIRE(depot->fx);
  CHECK(depot->fx->quote.local_price == dec("80"));
  CHECK(depot->fx->quote.rate == dec("1.25"));
  CHECK(depot->fx->settles_in.empty());  // paid from the euro cash
  const Order* taxable = order_of(pool, "Taxable", "EBND");
  REQUIRE(taxable);
  CHECK(taxable->quantity == dec("12"));
  REQUIRE(taxable->fx);
  CHECK(taxable->fx->settles_in == "USD");
  CHECK(taxable->fx->settled == taxable->value);
  REQUIRE(pool.conversions.size() == 1);
  CHECK((pool.conversions[0].account == "Taxable" && pool.conversions[0].from == "USD" &&
         pool.conversions[0].to == "EUR"));
  CHECK(pool.conversions[0].amount == taxable->fx->local_settled);
  // The part's orders carry the same currency side.
  for (const auto& o : p.parts[0].orders)
    if (o.symbol == "EBND") CHECK(o.fx);
}

TEST_CASE("plan across currencies: the pool is valued in the currency asked") {
  EuroHousehold h;
  h.rate();
  const auto p =
      propose_plan(h.db, parse_plan(kEuroPlan, "plan.toml", h.f.path), std::nullopt, {}, "EUR");
  CHECK(p.pools[0].currency == "EUR");
  // 5000 USD at 0.8 and 2000 EUR.
  CHECK(p.pools[0].plan.pool_value == dec("6000"));
}

TEST_CASE("plan across currencies: planned cash is in its account's own currency") {
  EuroHousehold h;
  h.rate();
  const auto p = h.run(kEuroPlan, {parse_planned_cash("--deposit", "Depot=100")});
  // 100 EUR at 1.25: 125 USD more in the pool.
  CHECK(p.pools[0].plan.pool_value == dec("7625"));
  REQUIRE(p.planned.size() == 1);
  CHECK(p.planned[0].currency == "EUR");
  CHECK(p.planned[0].converted == dec("125"));
  CHECK(p.planned[0].into == "USD");
}

TEST_CASE("plan: planned cash in the pool's currency states no conversion") {
  EuroHousehold h;
  h.rate();
  const auto p = h.run(kEuroPlan, {parse_planned_cash("--deposit", "Taxable=100")});
  REQUIRE(p.planned.size() == 1);
  CHECK(p.planned[0].currency == "USD");
  CHECK_FALSE(p.planned[0].converted);
}
