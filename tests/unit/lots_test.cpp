// Lots and cost basis under every method, splits and transfers.
#include <doctest/doctest.h>
#include <fmt/format.h>

#include <cstdint>
#include <stdexcept>
#include <utility>
#include <vector>

#include "ledger/allocation.h"
#include "ledger_fixture.h"

using namespace keel;
using namespace keel::testing;

namespace {

// Two lots of ALFA at different costs, the second dearer: 10 @ 100 (+5 fee)
// and 10 @ 120 (+5 fee), then a lot of 10 @ 90 (+5 fee).
void three_lots(LedgerFixture& f, BasisMethod method) {
  f.account("Main", method);
  f.security("ALFA");
  f.cash(TxnKind::deposit, "2024-01-02", "Main", "10000");
  f.buy("2024-01-03", "Main", "ALFA", "10", "100", "5");  // lot 2: cost 1005
  f.buy("2024-02-03", "Main", "ALFA", "10", "120", "5");  // lot 3: cost 1205
  f.buy("2024-03-03", "Main", "ALFA", "10", "90", "5");   // lot 4: cost 905
}

// Units of ALFA brought into Main from outside at a unit cost, held since `acquired`.
ledger::PostRequest brought_in(const char* date, const char* quantity, const char* price,
                               const char* acquired) {
  ledger::PostRequest r;
  r.kind = TxnKind::transfer_in;
  r.date = day(date);
  r.account = "Main";
  r.symbol = "ALFA";
  r.quantity = dec(quantity);
  r.price = dec(price);
  r.acquired = day(acquired);
  return r;
}

}  // namespace

TEST_CASE("lots: a buy opens a lot whose cost includes the fee") {
  LedgerFixture f;
  three_lots(f, BasisMethod::fifo);
  const Book book = f.book();
  const auto& position = book.account(1).positions.at(1);
  REQUIRE(position.lots.size() == 3);
  CHECK(position.lots[0].cost == dec("1005"));
  CHECK(position.quantity() == dec("30"));
  CHECK(position.cost() == dec("3115"));
}

TEST_CASE("lots: fifo sells the oldest lot first and splits a lot's cost by quantity") {
  LedgerFixture f;
  three_lots(f, BasisMethod::fifo);
  f.sell("2024-06-03", "Main", "ALFA", "15", "130", "5");
  const auto gains = f.gains();
  REQUIRE(gains.size() == 2);
  CHECK(gains[0].part.lot_id == 2);
  CHECK(gains[0].part.cost == dec("1005"));
  CHECK(gains[1].part.lot_id == 3);
  CHECK(gains[1].part.cost == dec("602.5"));  // 1205 x 5/10
  // Proceeds 15 x 130 - 5 = 1945, split 10:5 -> 1296.67 and the remainder 648.33.
  CHECK(gains[0].part.proceeds == dec("1296.67"));
  CHECK(gains[1].part.proceeds == dec("648.33"));
  CHECK(f.book().account(1).positions.at(1).cost() == dec("1507.5"));  // 602.5 + 905
}

TEST_CASE("lots: lifo sells the newest lot first") {
  LedgerFixture f;
  three_lots(f, BasisMethod::lifo);
  f.sell("2024-06-03", "Main", "ALFA", "12", "130");
  const auto gains = f.gains();
  REQUIRE(gains.size() == 2);
  CHECK(gains[0].part.lot_id == 4);
  CHECK(gains[0].part.cost == dec("905"));
  CHECK(gains[1].part.lot_id == 3);
  CHECK(gains[1].part.cost == dec("241"));  // 1205 x 2/10
}

TEST_CASE("lots: hifo sells the highest unit cost first") {
  LedgerFixture f;
  three_lots(f, BasisMethod::hifo);
  f.sell("2024-06-03", "Main", "ALFA", "15", "130");
  const auto gains = f.gains();
  REQUIRE(gains.size() == 2);
  CHECK(gains[0].part.lot_id == 3);  // 120.50 a unit
  CHECK(gains[1].part.lot_id == 2);  // 100.50 a unit
  CHECK(gains[1].part.cost == dec("502.5"));
}

TEST_CASE("lots: specific lots sell exactly the lots named") {
  LedgerFixture f;
  three_lots(f, BasisMethod::specific);
  f.sell("2024-06-03", "Main", "ALFA", "6", "130", "0", {{4, dec("4")}, {2, dec("2")}});
  const auto gains = f.gains();
  REQUIRE(gains.size() == 2);
  CHECK(gains[0].part.lot_id == 4);
  CHECK(gains[0].part.cost == dec("362"));  // 905 x 4/10
  CHECK(gains[1].part.lot_id == 2);
  CHECK(gains[1].part.cost == dec("201"));  // 1005 x 2/10
}

TEST_CASE("lots: an account on specific lots refuses a sell that names none") {
  LedgerFixture f;
  three_lots(f, BasisMethod::specific);
  CHECK_THROWS_WITH_AS(
      f.sell("2024-06-03", "Main", "ALFA", "6", "130"),
      "the new sell on 2024-06-03 in 'Main': account 'Main' sells specific lots; name them with "
      "--lots LOT:QUANTITY (see 'keel lots')",
      InputError);
}

TEST_CASE("lots: specific picks must add up to the quantity sold") {
  LedgerFixture f;
  three_lots(f, BasisMethod::fifo);
  CHECK_THROWS_WITH_AS(
      f.sell("2024-06-03", "Main", "ALFA", "6", "130", "0", {{4, dec("4")}}),
      "the new sell on 2024-06-03 in 'Main': the lots named add up to 4, not the quantity 6",
      InputError);
  CHECK_THROWS_AS(f.sell("2024-06-03", "Main", "ALFA", "6", "130", "0", {{99, dec("6")}}),
                  InputError);
  CHECK_THROWS_AS(f.sell("2024-06-03", "Main", "ALFA", "11", "130", "0", {{4, dec("11")}}),
                  InputError);
}

TEST_CASE("lots: average cost sells at the pooled average and re-pools what stays") {
  LedgerFixture f;
  three_lots(f, BasisMethod::average);
  f.sell("2024-06-03", "Main", "ALFA", "15", "130");
  // Pool: 30 units costing 3115; 15 leave at 3115 x 15/30 = 1557.50.
  Decimal cost;
  for (const auto& g : f.gains()) cost += g.part.cost;
  CHECK(cost == dec("1557.5"));
  const Book book = f.book();
  const auto& position = book.account(1).positions.at(1);
  CHECK(position.cost() == dec("1557.5"));
  CHECK(position.quantity() == dec("15"));
  // Holding periods still come from the oldest units (lot 2 first).
  CHECK(f.gains()[0].part.lot_id == 2);
}

TEST_CASE("lots: partial closes never lose or make a cent") {
  LedgerFixture f;
  f.account("Main");
  f.security("ALFA");
  f.cash(TxnKind::deposit, "2024-01-02", "Main", "1000");
  f.buy("2024-01-03", "Main", "ALFA", "3", "33.333", "0.01");  // cost 100.009
  f.sell("2024-02-01", "Main", "ALFA", "1", "40");
  f.sell("2024-02-02", "Main", "ALFA", "1", "40");
  f.sell("2024-02-03", "Main", "ALFA", "1", "40");
  Decimal cost;
  for (const auto& g : f.gains()) cost += g.part.cost;
  CHECK(cost == dec("100.009"));
}

TEST_CASE("ledger rows: a back-dated row is listed in posting order, by day and then by id") {
  LedgerFixture f;
  f.account("Main");
  f.security("ALFA");
  const auto late = f.cash(TxnKind::deposit, "2024-03-01", "Main", "100");
  const auto early = f.cash(TxnKind::deposit, "2024-01-01", "Main", "200");
  const auto same_day = f.cash(TxnKind::deposit, "2024-03-01", "Main", "300");
  const auto buy = f.buy("2024-02-01", "Main", "ALFA", "1", "50");
  std::vector<std::int64_t> ids;
  for (const auto& t : store::list_transactions(f.db)) ids.push_back(t.id);
  CHECK(ids == std::vector<std::int64_t>{early, buy, late, same_day});
}

TEST_CASE(
    "ledger rows: a read for the replay leaves ref, row hash and note unset, the rest equal") {
  LedgerFixture f;
  f.account("Main", BasisMethod::specific);
  f.security("ALFA");
  f.cash(TxnKind::deposit, "2024-01-02", "Main", "1000");
  ledger::PostRequest r;
  r.kind = TxnKind::buy;
  r.date = day("2024-01-03");
  r.account = "Main";
  r.symbol = "ALFA";
  r.quantity = dec("4");
  r.price = dec("12.5");
  r.fee = dec("0.75");
  r.ref = "B-17";
  r.note = "first lot";
  ledger::post(f.db, r);
  r.ref.reset();
  r.note.reset();
  r.row_hash = "9f3c";
  r.date = day("2024-01-04");
  const auto second = ledger::post(f.db, r).front();
  f.sell("2024-01-05", "Main", "ALFA", "1", "13", "0", {LotPick{second, dec("1")}});
  const auto extra = f.cash(TxnKind::deposit, "2024-01-06", "Main", "5");
  ledger::void_transaction(f.db, extra, "booked twice");
  const auto all = store::list_transactions(f.db);
  const auto replay = store::list_transactions(f.db, store::TxnFields::replay);
  REQUIRE(all.size() == 6);
  REQUIRE(replay.size() == 6);
  CHECK(all[1].ref == "B-17");
  CHECK(all[1].note == "first lot");
  CHECK(all[2].row_hash == "9f3c");
  CHECK(all[3].lots.size() == 1);
  CHECK(all[5].voids_id == extra);
  CHECK(store::optional_fields_indexed(f.db));
  for (std::size_t i = 0; i < all.size(); ++i) {
    CHECK_FALSE(replay[i].ref);
    CHECK_FALSE(replay[i].row_hash);
    CHECK_FALSE(replay[i].note);
    const Transaction& e = all[i];
    CHECK(replay[i].id == e.id);
    CHECK(replay[i].account_id == e.account_id);
    CHECK(replay[i].date == e.date);
    CHECK(replay[i].kind == e.kind);
    CHECK(replay[i].security_id == e.security_id);
    CHECK(replay[i].quantity == e.quantity);
    CHECK(replay[i].price == e.price);
    CHECK(replay[i].amount == e.amount);
    CHECK(replay[i].fee == e.fee);
    CHECK(replay[i].currency == e.currency);
    CHECK(replay[i].rate == e.rate);
    CHECK(replay[i].acquired == e.acquired);
    CHECK(replay[i].link_id == e.link_id);
    CHECK(replay[i].voids_id == e.voids_id);
    CHECK(replay[i].lots.size() == e.lots.size());
  }
}

TEST_CASE("splits: a two-for-one split doubles units and keeps total cost") {
  LedgerFixture f;
  three_lots(f, BasisMethod::fifo);
  ledger::post_split(f.db, "ALFA", day("2024-04-01"), dec("2"));
  const Book book = f.book();
  const auto& position = book.account(1).positions.at(1);
  CHECK(position.quantity() == dec("60"));
  CHECK(position.cost() == dec("3115"));
  CHECK(position.lots[0].quantity == dec("20"));
}

TEST_CASE("splits: a one-for-ten reverse split applies at the start of its day") {
  LedgerFixture f;
  f.account("Main");
  f.security("ALFA");
  f.cash(TxnKind::deposit, "2024-01-02", "Main", "10000");
  f.buy("2024-01-03", "Main", "ALFA", "100", "5");
  ledger::post_split(f.db, "ALFA", day("2024-05-01"), dec("0.1"));
  // On the split day only the new 10 units exist.
  CHECK_THROWS_AS(f.sell("2024-05-01", "Main", "ALFA", "11", "50"), InputError);
  f.sell("2024-05-01", "Main", "ALFA", "10", "50");
  CHECK(f.gains().at(0).part.cost == dec("500"));
}

TEST_CASE("transfers: moving units between own accounts carries lots, costs and dates") {
  LedgerFixture f;
  three_lots(f, BasisMethod::fifo);
  f.account("Retirement");
  ledger::PostRequest r;
  r.kind = TxnKind::transfer_out;
  r.date = day("2024-07-01");
  r.account = "Main";
  r.to_account = "Retirement";
  r.symbol = "ALFA";
  r.quantity = dec("15");
  const auto ids = ledger::post(f.db, r);
  REQUIRE(ids.size() == 2);
  const Book book = f.book();
  const auto& moved = book.account(2).positions.at(1);  // account 2 is Retirement
  REQUIRE(moved.lots.size() == 2);
  CHECK(moved.lots[0].lot_id == 2);
  CHECK(moved.lots[0].acquired == day("2024-01-03"));
  CHECK(moved.lots[0].cost == dec("1005"));
  CHECK(moved.lots[1].cost == dec("602.5"));
  CHECK(book.account(1).positions.at(1).quantity() == dec("15"));
  CHECK(f.gains().empty());  // a transfer is not a disposal
}

TEST_CASE("transfers: units brought in from outside take the given unit cost and date") {
  LedgerFixture f;
  f.account("Main");
  f.security("ALFA");
  ledger::post(f.db, brought_in("2024-07-01", "8", "12.5", "2019-03-04"));
  const Book book = f.book();
  const auto& lot = book.account(1).positions.at(1).lots.at(0);
  CHECK(lot.cost == dec("100"));
  CHECK(lot.acquired == day("2019-03-04"));
}

TEST_CASE("lots: fifo takes a lot brought in with an older date before earlier purchases") {
  LedgerFixture f;
  three_lots(f, BasisMethod::fifo);
  const auto ids = ledger::post(f.db, brought_in("2024-04-01", "4", "50", "2019-03-04"));
  f.sell("2024-06-03", "Main", "ALFA", "6", "130");
  // The lot acquired 2019-03-04 (opened last) goes whole, then 2 of lot 2's
  // 10 units (1005 x 2/10).
  std::vector<std::pair<std::int64_t, Decimal>> taken;
  for (const auto& g : f.gains()) taken.emplace_back(g.part.lot_id, g.part.cost);
  CHECK(taken ==
        std::vector<std::pair<std::int64_t, Decimal>>{{ids.front(), dec("200")}, {2, dec("201")}});
}

TEST_CASE("book: a holdings copy keeps what is held, not the parts realized before") {
  LedgerFixture f;
  three_lots(f, BasisMethod::fifo);
  f.sell("2024-06-03", "Main", "ALFA", "15", "130", "5");
  Book book = f.book();
  Book copy = book.holdings_copy();
  REQUIRE(book.realized().size() == 2);
  CHECK(copy.realized().empty());
  CHECK(copy.account(1).cash == book.account(1).cash);
  CHECK(copy.last_trade_price(1) == book.last_trade_price(1));
  const auto& lots = copy.account(1).positions.at(1).lots;
  REQUIRE(lots.size() == 2);
  CHECK(lots[0].lot_id == 3);
  CHECK(lots[0].cost == dec("602.5"));
  CHECK(lots[1].lot_id == 4);
  // Replayed on, the copy books the next sale as the whole book does.
  Transaction sale;
  sale.id = 99;
  sale.account_id = 1;
  sale.date = day("2024-07-01");
  sale.kind = TxnKind::sell;
  sale.security_id = 1;
  sale.quantity = dec("7");
  sale.price = dec("140");
  book.apply(sale);
  copy.apply(sale);
  REQUIRE(copy.realized().size() == 2);
  CHECK(copy.realized()[0].cost == book.realized()[2].cost);
  CHECK(copy.realized()[1].proceeds == book.realized()[3].proceeds);
  CHECK(copy.account(1).cash == book.account(1).cash);
  CHECK(copy.account(1).positions.at(1).cost() == book.account(1).positions.at(1).cost());
}

TEST_CASE("gains: a lot held more than a year is long-term") {
  CHECK_FALSE(ledger::held_long_term(day("2024-01-03"), day("2025-01-03")));
  CHECK(ledger::held_long_term(day("2024-01-03"), day("2025-01-04")));
  CHECK(ledger::held_long_term(day("2024-02-29"), day("2025-03-01")));
}

TEST_CASE("gains: a threshold in days is long-term only beyond it, not on the day itself") {
  LedgerFixture f;
  three_lots(f, BasisMethod::fifo);
  f.sell("2025-01-04", "Main", "ALFA", "15", "130", "5");  // lot 2 held 367 days, lot 3 336
  const auto by_anniversary = ledger::realized_gains(f.db, std::nullopt);
  REQUIRE(by_anniversary.size() == 2);
  CHECK(by_anniversary[0].days_held == 367);
  CHECK(by_anniversary[0].long_term);
  CHECK(by_anniversary[1].days_held == 336);
  CHECK_FALSE(by_anniversary[1].long_term);
  const auto at_367 = ledger::realized_gains(f.db, std::nullopt, std::nullopt, 367);
  CHECK_FALSE(at_367[0].long_term);
  const auto at_335 = ledger::realized_gains(f.db, std::nullopt, std::nullopt, 335);
  CHECK(at_335[0].long_term);
  CHECK(at_335[1].long_term);
}

TEST_CASE("gains: totals by term put each part in its own term and add up to the whole") {
  LedgerFixture f;
  three_lots(f, BasisMethod::fifo);
  // Proceeds 15 x 130 - 5 = 1945, split 10:5 between lot 2 (long) and lot 3 (short).
  f.sell("2025-01-04", "Main", "ALFA", "15", "130", "5");
  const auto t = ledger::totals_by_term(f.gains());
  CHECK(t.long_term.proceeds == dec("1296.67"));
  CHECK(t.long_term.cost == dec("1005"));
  CHECK(t.long_term.gain == dec("291.67"));
  CHECK(t.long_term.parts == 1);
  CHECK(t.short_term.proceeds == dec("648.33"));
  CHECK(t.short_term.cost == dec("602.5"));
  CHECK(t.short_term.gain == dec("45.83"));
  CHECK(t.short_term.parts == 1);
  const auto all = t.all();
  CHECK(all.proceeds == dec("1945"));
  CHECK(all.cost == dec("1607.5"));
  CHECK(all.gain == dec("337.5"));
  CHECK(all.parts == 2);
}

// Published worked example: IRS Publication 564 (2009), "Mutual Fund
// Distributions", Table 3 "Example of How To Figure Basis of Shares Sold":
// 160 shares for $4,000 on 2008-02-06, 240 for $4,800 on 2008-08-07, a $300
// dividend reinvested as 10 shares on 2008-12-18; 210 shares sold for $6,720
// on 2009-10-01. FIFO basis of the shares sold: $4,000 + $1,000 = $5,000.
TEST_CASE("published example: FIFO basis of IRS Publication 564 Table 3 is $5,000") {
  LedgerFixture f;
  f.account("Fund", BasisMethod::fifo);
  f.security("FUNDX", SecurityKind::fund);
  f.cash(TxnKind::deposit, "2008-02-01", "Fund", "9100");
  f.buy("2008-02-06", "Fund", "FUNDX", "160", "25");
  f.buy("2008-08-07", "Fund", "FUNDX", "240", "20");
  f.buy("2008-12-18", "Fund", "FUNDX", "10", "30");
  f.sell("2009-10-01", "Fund", "FUNDX", "210", "32");
  Decimal cost, proceeds;
  for (const auto& g : f.gains()) cost += g.part.cost, proceeds += g.part.proceeds;
  CHECK(cost == dec("5000"));
  CHECK(proceeds == dec("6720"));
  // Average basis of the same sale, by the publication's method (total cost
  // 9,100 of 410 shares, times 210 sold): our arithmetic, rounded to the cent.
  LedgerFixture g;
  g.account("Fund", BasisMethod::average);
  g.security("FUNDX", SecurityKind::fund);
  g.cash(TxnKind::deposit, "2008-02-01", "Fund", "9100");
  g.buy("2008-02-06", "Fund", "FUNDX", "160", "25");
  g.buy("2008-08-07", "Fund", "FUNDX", "240", "20");
  g.buy("2008-12-18", "Fund", "FUNDX", "10", "30");
  g.sell("2009-10-01", "Fund", "FUNDX", "210", "32");
  Decimal average_cost;
  for (const auto& x : g.gains()) average_cost += x.part.cost;
  CHECK(average_cost == dec("4660.98"));  // 9100 x 210 / 410 = 4660.9756...
}

// IRS Publication 564 (2009), average basis worksheet example: shares whose
// total basis is $4,800 ($1,000 + $1,200 + $2,600) and 300 shares in all; 150
// sold; basis of the shares sold $2,400 ($16 a share). The split of the 300
// shares into three purchases of 100 is ours; the published totals fix the result.
TEST_CASE("published example: average basis of IRS Publication 564 worksheet is $2,400") {
  LedgerFixture f;
  f.account("Fund", BasisMethod::average);
  f.security("FUNDX", SecurityKind::fund);
  f.cash(TxnKind::deposit, "2008-01-01", "Fund", "4800");
  f.buy("2008-01-02", "Fund", "FUNDX", "100", "10");
  f.buy("2008-06-02", "Fund", "FUNDX", "100", "12");
  f.buy("2008-11-03", "Fund", "FUNDX", "100", "26");
  f.sell("2009-05-11", "Fund", "FUNDX", "150", "20");
  Decimal cost;
  for (const auto& g : f.gains()) cost += g.part.cost;
  CHECK(cost == dec("2400"));
}

// --- Splitting an amount: the largest-remainder method ----------------------

namespace {

Decimal sum(const std::vector<Decimal>& parts) {
  Decimal total;
  for (const auto& p : parts) total += p;
  return total;
}

std::vector<Decimal> decs(std::initializer_list<const char*> texts) {
  std::vector<Decimal> out;
  for (const char* t : texts) out.push_back(dec(t));
  return out;
}

}  // namespace

// Published worked example: the Hamilton (largest-remainder) apportionment of
// 60 seats among the 15 states of the 1790 United States census, as worked in
// electowiki.org's article "Hamilton method" (quotas floored to 52 seats, the
// 8 left to the largest remainders).
TEST_CASE("allocate: apportions the 1790 census example exactly as the Hamilton method does") {
  const auto populations =
      decs({"630560", "475327", "432879", "353523", "331589", "278514", "236841", "206236",
            "179570", "141822", "85533", "70835", "68705", "68446", "55540"});
  const auto seats = allocate(dec("60"), populations, 0);
  CHECK(seats ==
        decs({"11", "8", "7", "6", "6", "5", "4", "3", "3", "2", "1", "1", "1", "1", "1"}));
}

TEST_CASE("allocate: a rest below the cent stays with the last part that has weight") {
  // 0.0151 over 999:1 -> the cent goes to the larger quota, 0.0051 below the grid to the last.
  CHECK(allocate(dec("0.0151"), decs({"0.999", "0.001"}), 2) == decs({"0.01", "0.0051"}));
  // Everything to the only weighted part, even when a zero weight comes last.
  CHECK(allocate(dec("0.0151"), decs({"5", "0"}), 2) == decs({"0.0151", "0"}));
}

TEST_CASE("allocate: a negative total gives parts of its sign that add up to it") {
  const auto parts = allocate(dec("-4.99"), decs({"1", "1", "1"}), 2);
  CHECK(parts == decs({"-1.67", "-1.66", "-1.66"}));
  CHECK(sum(parts) == dec("-4.99"));
}

TEST_CASE("allocate: a single part takes the whole total, below the grid too") {
  CHECK(allocate(dec("-12.34567"), decs({"3"}), 2) == decs({"-12.34567"}));
  CHECK(allocate(dec("0"), decs({"0.5"}), 2) == decs({"0"}));
}

TEST_CASE("allocate: ties in the remainders go to the earlier parts") {
  CHECK(allocate(dec("0.02"), decs({"1", "1", "1"}), 2) == decs({"0.01", "0.01", "0"}));
}

TEST_CASE("allocate: refuses negative weights and weights that are all zero") {
  CHECK_THROWS_AS(allocate(dec("1"), decs({"1", "-1"}), 2), std::invalid_argument);
  CHECK_THROWS_AS(allocate(dec("1"), decs({"0", "0"}), 2), std::invalid_argument);
  CHECK(allocate(dec("1"), {}, 2).empty());
}

TEST_CASE("allocate: machine integers give the same parts as Decimal arithmetic, to the digit") {
  // A fixed linear congruential sequence (Knuth's MMIX constants): the same cases every run.
  std::uint64_t state = 2718;
  auto next = [&](std::uint64_t bound) {
    state = state * 6364136223846793005ULL + 1442695040888963407ULL;
    return (state >> 11) % bound;
  };
  // Mantissas of every size up to a machine word and past it, scales 0..12:
  // sizes that overflow the integer path fall back, the rest must agree.
  auto number = [&](bool may_be_zero) {
    const int digits = 1 + static_cast<int>(next(20));
    std::string text;
    for (int d = 0; d < digits; ++d) text += static_cast<char>('0' + next(10));
    if (!may_be_zero && text.find_first_not_of('0') == std::string::npos) text.back() = '7';
    return Decimal::parse(fmt::format("{}e-{}", text, next(13)));
  };
  int in_integers = 0;
  for (int round = 0; round < 20000; ++round) {
    const int places = static_cast<int>(next(7));
    Decimal total = number(true);
    if (next(3) == 0) total = -total;
    std::vector<Decimal> weights;
    const std::size_t n = 2 + next(8);
    // Few distinct small weights give ties in the remainders.
    const bool ties = next(2) == 0;
    for (std::size_t i = 0; i < n; ++i)
      weights.push_back(next(5) == 0 ? Decimal()
                        : ties       ? Decimal(1 + static_cast<long long>(next(3)))
                                     : number(false));
    if (sum(weights).is_zero()) weights.back() = dec("1");
    const auto expected = allocate_in_decimals(total, weights, places);
    CHECK(allocate(total, weights, places) == expected);
    if (const auto fast = allocate_in_integers(total, weights, places)) {
      ++in_integers;
      REQUIRE(*fast == expected);
    }
  }
  // Most cases fit machine integers; the rest took the Decimal path.
  CHECK(in_integers > 10000);
  CHECK(in_integers < 20000);
}

TEST_CASE("allocate: on many generated splits every part lies within the total and they add up") {
  // A fixed linear congruential sequence (Knuth's MMIX constants): the same cases every run.
  std::uint64_t state = 12345;
  auto next = [&](std::uint64_t bound) {
    state = state * 6364136223846793005ULL + 1442695040888963407ULL;
    return (state >> 33) % bound;
  };
  for (int round = 0; round < 2000; ++round) {
    const int places = static_cast<int>(next(3));
    Decimal total = Decimal::parse(fmt::format("{}e-{}", next(100000), next(5)));
    if (next(4) == 0) total = -total;
    std::vector<Decimal> weights;
    const std::size_t n = 1 + next(12);
    for (std::size_t i = 0; i < n; ++i)
      weights.push_back(
          Decimal::parse(fmt::format("{}e-{}", next(4) == 0 ? 0 : next(5000), next(4))));
    if (sum(weights).is_zero()) weights.back() = dec("1");
    const auto parts = allocate(total, weights, places);
    REQUIRE(sum(parts) == total);
    for (std::size_t i = 0; i < n; ++i) {
      CHECK(parts[i].abs() <= total.abs());
      CHECK((parts[i].is_zero() || parts[i].sign() == total.sign()));
      if (weights[i].is_zero()) CHECK(parts[i].is_zero());
    }
  }
}

TEST_CASE("regression: selling 0.999 of a lot costing 0.0151 left the open part at -0.0049") {
  LedgerFixture f;
  f.sub_cent_lot();
  CHECK(f.gains().at(0).part.cost == dec("0.01"));
  const Book book = f.book();
  const auto& lot = book.account(1).positions.at(1).lots.at(0);
  CHECK(lot.quantity == dec("0.001"));
  CHECK(lot.cost == dec("0.0051"));
}

TEST_CASE("regression: average cost split a lot costing 0.0151 into 0.02 sold and -0.0049 kept") {
  LedgerFixture f;
  f.sub_cent_lot(BasisMethod::average);
  CHECK(f.gains().at(0).part.cost == dec("0.01"));
  CHECK(f.book().account(1).positions.at(1).cost() == dec("0.0051"));
  f.sell("2024-02-02", "Main", "ALFA", "0.001", "0.02");
  CHECK(f.gains().at(1).part.cost == dec("0.0051"));
}

TEST_CASE("regression: 1000 one-unit lots sold at 0.006 gave the last part proceeds of -3.99") {
  LedgerFixture f;
  f.account("Main");
  f.security("ALFA");
  f.cash(TxnKind::deposit, "2020-01-02", "Main", "100");
  std::vector<ledger::PostRequest> buys;
  for (int i = 0; i < 1000; ++i) {
    ledger::PostRequest r;
    r.kind = TxnKind::buy;
    r.date = day(i < 999 ? "2020-01-03" : "2024-06-03");  // 999 long-held lots, one recent
    r.account = "Main";
    r.symbol = "ALFA";
    r.quantity = dec("1");
    r.price = dec("0.005");
    buys.push_back(r);
  }
  ledger::post_batch(f.db, buys, {});
  f.sell("2024-07-01", "Main", "ALFA", "1000", "0.006");
  const auto gains = f.gains();
  REQUIRE(gains.size() == 1000);
  for (const auto& g : gains) {
    CHECK(g.part.proceeds >= Decimal());
    CHECK(g.part.proceeds <= dec("6"));
  }
  // 600 cents over 1000 equal quotas of 0.6 cent: the first 600 parts (oldest
  // first) take a cent each.
  CHECK(gains[599].part.proceeds == dec("0.01"));
  CHECK(gains[600].part.proceeds == dec("0"));
  const auto t = ledger::totals_by_term(gains);
  CHECK(t.long_term.proceeds == dec("6"));
  CHECK(t.short_term.proceeds == dec("0"));
  CHECK(t.all().proceeds == dec("6"));
}
