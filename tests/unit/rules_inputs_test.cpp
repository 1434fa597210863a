// The rule input builder (rules/inputs.h): universe and sleeves resolved once,
// candidates and quotes from a market view, and the messages every command
// shares. Invented securities; expectations worked out by hand.
#include <doctest/doctest.h>

#include <tuple>

#include "ledger_fixture.h"
#include "market/day_view.h"
#include "rules/inputs.h"

using namespace keel;
using namespace keel::testing;
using namespace keel::rules;

namespace {

struct Small : LedgerFixture {
  Small() {
    add("ALDER", SecurityKind::stock, "Tools");
    add("BIRCH", SecurityKind::stock, "Power");
    add("CEDAR", SecurityKind::stock, "Tools");
    add("DUNE", SecurityKind::fund, "Funds");
    closes({{"ALDER", "2024-05-31", "10"},
            {"BIRCH", "2024-05-10", "20"},  // three weeks old on 2024-05-31
            {"DUNE", "2024-05-31", "50"}});
    figures("pe", {{"ALDER", "2024-03-31", "2024-04-30", "8"},
                   {"BIRCH", "2024-03-31", "2024-04-30", "12"},
                   {"CEDAR", "2024-03-31", "2024-04-30", "9"}});
  }
  void add(const std::string& symbol, SecurityKind kind, const std::string& sector,
           const char* currency = "USD") {
    Security s;
    s.symbol = symbol;
    s.name = symbol + " (invented)";
    s.kind = kind;
    s.sector = sector;
    s.currency = currency;
    store::insert_security(db, s);
  }
  std::int64_t id(const char* symbol) { return store::security_with_symbol(db, symbol).id; }
};

Rule rule(const std::string& extra) {
  return parse_rule("[scope]\naccounts = [\"Main\"]\n" + extra, "r.toml");
}

}  // namespace

TEST_CASE("inputs: the universe is every stock that is not a sleeve, by symbol") {
  Small m;
  const market::DayView view(m.db);
  const Rule r = rule("[[sleeve]]\nsymbol = \"CEDAR\"\nweight_pct = 10\n");
  const Inputs in(r, view);
  CHECK(in.universe() == std::vector<std::int64_t>{m.id("ALDER"), m.id("BIRCH")});
  CHECK(in.sleeves() == std::vector<std::int64_t>{m.id("CEDAR")});
  CHECK(in.securities().size() == 3);
}

TEST_CASE("inputs: a sector's stocks, and an unknown sector named with the known ones") {
  Small m;
  const market::DayView view(m.db);
  const Rule tools = rule("sector = \"Tools\"\n");
  CHECK(Inputs(tools, view).universe() == std::vector<std::int64_t>{m.id("ALDER"), m.id("CEDAR")});
  // Funds is a fund's sector, not a stock's: it is not offered.
  CHECK_THROWS_WITH_AS(Inputs(rule("sector = \"Funds\"\n"), view),
                       "r.toml:3: key 'scope.sector': no stock in the ledger has sector 'Funds' "
                       "(sectors: Power, Tools)",
                       InputError);
}

TEST_CASE("inputs: a metric without figures names the stored metrics or the nearest") {
  Small m;
  const market::DayView view(m.db);
  CHECK_THROWS_WITH_AS(Inputs(rule("[screen]\nmetric = \"book_value\"\n"), view),
                       "r.toml:4: key 'screen.metric': the ledger holds no figures for metric "
                       "'book_value' (stored metrics: pe)",
                       InputError);
  CHECK_THROWS_WITH_AS(Inputs(rule("[screen]\nmetric = \"ep\"\n"), view),
                       "r.toml:4: key 'screen.metric': the ledger holds no figures for metric "
                       "'ep'; did you mean 'pe'?",
                       InputError);
  LedgerFixture empty;
  empty.security("ALDER");
  CHECK_THROWS_WITH_AS(Inputs(rule(""), market::DayView(empty.db)),
                       "r.toml: key 'screen.metric' (default \"pe\"): the ledger holds no "
                       "figures for metric 'pe'; import metrics first ('keel import metrics FILE')",
                       InputError);
}

TEST_CASE("inputs: candidates carry the figure known on the day and whether a close exists") {
  Small m;
  const market::DayView view(m.db);
  const Rule r = rule("");
  const auto c = Inputs(r, view).candidates(view, day("2024-05-31"), {m.id("BIRCH")});
  REQUIRE(c.size() == 3);
  CHECK(c[0].symbol == "ALDER");
  CHECK(c[0].has_price);
  CHECK_FALSE(c[0].held);
  CHECK(c[1].held);
  CHECK(c[2].symbol == "CEDAR");
  CHECK(c[2].figure->value == Decimal(9));
  CHECK_FALSE(c[2].has_price);  // a figure, but never a close
  CHECK_FALSE(Inputs(r, view).candidates(view, day("2024-04-29"), {})[0].figure.has_value());
}

namespace {

// The targets' symbols of a rule over ALDER, BIRCH and CEDAR selecting one
// name on 2024-05-31 (with `extra` rule text), `held` held.
std::vector<Target> targets_of(Small& m, const std::string& extra,
                               const std::set<std::int64_t>& held) {
  const market::DayView view(m.db);
  const Rule r = rule(
      "symbols = [\"ALDER\", \"BIRCH\", \"CEDAR\"]\n[screen]\nmin_names = 2\n"
      "[select]\nby = \"count\"\ncount = 1\n" +
      extra);
  const auto s = Inputs(r, view).select(view, day("2024-05-31"), held);
  REQUIRE_FALSE(s.refusal);
  return s.targets;
}

std::vector<std::string> symbols_of(const std::vector<Target>& targets) {
  std::vector<std::string> out;
  for (const auto& t : targets) out.push_back(t.symbol);
  return out;
}

// What the screen reads of a candidate.
using Seen = std::tuple<std::int64_t, std::string, bool, bool, bool>;
std::vector<Seen> seen(const std::vector<Candidate>& candidates) {
  std::vector<Seen> out;
  for (const auto& c : candidates)
    out.emplace_back(c.security_id, c.symbol, c.held, c.has_price, c.figure.has_value());
  return out;
}

}  // namespace

TEST_CASE("inputs: a held name outside the universe becomes an exit") {
  Small m;
  const auto t = targets_of(m, "", {m.id("DUNE")});
  CHECK(symbols_of(t) == std::vector<std::string>{"ALDER", "DUNE"});
  CHECK(t[1].weight.is_zero());
  CHECK(t[1].why == "not in the rule's universe");
}

TEST_CASE("inputs: a held name of the universe and a held sleeve are targets once") {
  Small m;
  const auto t = targets_of(m, "[[sleeve]]\nsymbol = \"DUNE\"\nweight_pct = 10\n",
                            {m.id("BIRCH"), m.id("DUNE")});
  CHECK(symbols_of(t) == std::vector<std::string>{"DUNE", "ALDER", "BIRCH"});
  CHECK(t[2].weight.is_zero());
  CHECK(t[2].why == "z = 0.71, rank 2 > 1");
}

TEST_CASE("inputs: candidates from a preloaded series are those of the day view") {
  Small m;
  const market::DayView view(m.db);
  const Rule r = rule("");
  const Inputs in(r, view);
  const auto series =
      market::Series::load(m.db, in.series_request(view, day("2024-05-01"), day("2024-05-31")));
  const std::set<std::int64_t> held{m.id("CEDAR"), m.id("DUNE")};
  const auto a = in.candidates(view, day("2024-05-31"), held);
  const auto b = in.candidates(series, day("2024-05-31"), held);
  CHECK(seen(b) == seen(a));
  CHECK(seen(b) == std::vector<Seen>{{m.id("ALDER"), "ALDER", false, true, true},
                                     {m.id("BIRCH"), "BIRCH", false, true, true},
                                     {m.id("CEDAR"), "CEDAR", true, false, true}});
}

TEST_CASE("inputs: a day that selects nothing is a result, not an error") {
  Small m;
  const market::DayView view(m.db);
  const Rule r = rule("");
  const auto s = Inputs(r, view).select(view, day("2024-05-31"), {});
  REQUIRE(s.refusal);
  CHECK(s.targets.empty());
  CHECK(s.refusal->text(r) ==
        "r.toml: key 'screen.min_names' (default 5): only 2 names pass the screen on "
        "2024-05-31; the rule needs at least 5");
}

namespace {

// Inputs on Small, with ALDER and BIRCH as targets at a half each.
struct Quoting {
  Small m;
  market::DayView view{m.db};
  Rule r = rule("");
  Inputs in{r, view};
  std::vector<Target> t{{m.id("ALDER"), "ALDER", dec("0.5"), false, std::nullopt, false, ""},
                        {m.id("BIRCH"), "BIRCH", dec("0.5"), false, std::nullopt, false, ""}};
};

}  // namespace

TEST_CASE("inputs: quotes at the latest close, with notes for old and missing ones") {
  Quoting s;
  auto& [m, view, r, in, t] = s;
  std::vector<std::string> notes;
  const auto q = in.quotes(
      view, day("2024-05-31"), t, {m.id("CEDAR")},
      [](std::int64_t) {
        return std::optional<Inputs::Trade>({day("2024-01-02"), dec("7.5")});
      },
      notes);
  CHECK(q.at(m.id("ALDER")).price == Decimal(10));
  CHECK(q.at(m.id("BIRCH")).price == Decimal(20));
  CHECK(q.at(m.id("CEDAR")).price == dec("7.5"));
  CHECK_FALSE(q.at(m.id("CEDAR")).tradable);
  CHECK(notes ==
        std::vector<std::string>{
            "BIRCH: the latest close on or before 2024-05-31 is from 2024-05-10",
            "CEDAR: no close on or before 2024-05-31; valued at its last trade price 7.5"});
}

TEST_CASE("inputs: a universe in two currencies is refused while nothing sets the rule's") {
  Small m;
  m.add("ELM", SecurityKind::stock, "Tools", "EUR");
  const market::DayView view(m.db);
  const Rule r = rule("");
  std::string message;
  try {
    const Inputs in(r, view);
  } catch (const InputError& e) {
    message = e.what();
  }
  CHECK(message.find("the universe holds stocks priced in EUR, USD; keel does not convert "
                     "between currencies yet: narrow it to one with scope.sector or "
                     "scope.symbols") != std::string::npos);
}

TEST_CASE("inputs: stocks priced in another than the rule's currency leave the universe, noted") {
  Small m;
  m.add("ELM", SecurityKind::stock, "Tools", "EUR");
  const market::DayView view(m.db);
  const Rule r = rule("");
  const Inputs in(r, view, "USD");
  CHECK(in.universe() == std::vector<std::int64_t>{m.id("ALDER"), m.id("BIRCH"), m.id("CEDAR")});
  REQUIRE(in.currency());
  CHECK(*in.currency() == "USD");
  CHECK(in.notes() ==
        std::vector<std::string>{"1 stock priced in other currencies than USD is left out of the "
                                 "universe (keel does not convert between currencies yet)"});
}

TEST_CASE("inputs: a name traded after its latest close is quoted at the trade's price") {
  Small m;
  const market::DayView view(m.db);
  const Rule r = rule("");
  const Inputs in(r, view);
  const std::vector<Target> t{{m.id("BIRCH"), "BIRCH", dec("1"), false, std::nullopt, false, ""}};
  std::vector<std::string> notes;
  const auto q = in.quotes(
      view, day("2024-05-31"), t, {},
      [](std::int64_t) {
        return std::optional<Inputs::Trade>({day("2024-05-20"), dec("21.5")});
      },
      notes);
  CHECK(q.at(m.id("BIRCH")).price == dec("21.5"));
  CHECK(q.at(m.id("BIRCH")).tradable);
  CHECK(notes == std::vector<std::string>{"BIRCH: valued at its trade price 21.5 of 2024-05-20, "
                                          "later than its latest close (2024-05-10)"});
}

TEST_CASE("inputs: quotes kept from an earlier day are priced anew, with the same notes") {
  Quoting s;
  auto& [m, view, r, in, t] = s;
  const auto never = [](std::int64_t) { return std::optional<Inputs::Trade>(); };
  std::vector<std::string> notes;
  Quotes kept;
  in.requote(view, day("2024-05-15"), t, {m.id("DUNE")}, never, notes, kept);
  CHECK(kept.at(m.id("ALDER")).price == Decimal());  // no close yet: valued at zero
  CHECK_FALSE(kept.at(m.id("ALDER")).tradable);
  CHECK(kept.at(m.id("DUNE")).price == Decimal());
  // Two weeks on: ALDER has its close, BIRCH's is three weeks old, DUNE is
  // no longer held (its quote stays, as it was).
  const std::vector<Target> later{t[1], t[0], t[0]};  // ALDER named twice: once
  notes.clear();
  in.requote(view, day("2024-05-31"), later, {m.id("ALDER")}, never, notes, kept);
  std::vector<std::string> fresh_notes;
  const auto fresh = in.quotes(view, day("2024-05-31"), later, {m.id("ALDER")}, never, fresh_notes);
  CHECK(notes == fresh_notes);
  CHECK(notes == std::vector<std::string>{
                     "BIRCH: the latest close on or before 2024-05-31 is from 2024-05-10"});
  for (const auto& entry : fresh) {
    const Quote& q = entry.second;  // not a structured binding: CAPTURE is a lambda
    CAPTURE(q.symbol);
    const Quote& k = kept.at(entry.first);
    CHECK(k.symbol == q.symbol);
    CHECK(k.price == q.price);
    CHECK(k.tradable == q.tradable);
    CHECK(k.lot_size == q.lot_size);
    CHECK(k.fx.has_value() == q.fx.has_value());
  }
  CHECK(kept.at(m.id("ALDER")).price == Decimal(10));
  CHECK(kept.at(m.id("ALDER")).tradable);
  CHECK(kept.size() == 3);
  CHECK(kept.at(m.id("DUNE")).price == Decimal());
}
