// The year-end statement: assembly from the ledger, the additivity identity,
// realized gains, income matching, and the forms' safety rules. Every expected
// figure is worked out by hand in the comments of StatementLedger.
#include "report/statement.h"

#include <doctest/doctest.h>
#include <fmt/format.h>
#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>

#include "ledger_fixture.h"
#include "report/statement_forms.h"
#include "store/price_write.h"

using namespace keel;
using namespace keel::testing;

namespace {

constexpr const char* T = "Harbor Taxable";
constexpr const char* P = "Harbor Pension";

// An invented household with every transaction kind, a split, a void and an
// internal transfer. Statement year 2025; the ledger starts 2024-03-01.
struct StatementLedger : LedgerFixture {
  StatementLedger() {
    account(T);
    account(P);
    security("ALDR");
    security("BRKN");
    security("IDXW", SecurityKind::index);
    // 2024: opening position. Lot 1: 100 ALDR @ 40 + 5 fee = 4005; cash 5995.
    cash(TxnKind::deposit, "2024-03-01", T, "10000");
    buy("2024-03-04", T, "ALDR", "100", "40", "5");
    close("ALDR", "2024-12-31", "45");  // opening value 5995 + 4500 = 10495, unrealized 495
    for (const auto& [d, level] :
         std::vector<std::pair<const char*, const char*>>{{"2024-12-31", "1000"},
                                                          {"2025-01-31", "1010"},
                                                          {"2025-02-28", "990"},
                                                          {"2025-03-31", "1030"},
                                                          {"2025-04-30", "1040"},
                                                          {"2025-05-30", "1020"},
                                                          {"2025-06-30", "1050"},
                                                          {"2025-07-31", "1060"},
                                                          {"2025-08-29", "1045"},
                                                          {"2025-09-30", "1070"},
                                                          {"2025-10-31", "1080"},
                                                          {"2025-11-28", "1090"},
                                                          {"2025-12-31", "1100"}})
      close("IDXW", d, level);
    // 2025, Taxable cash after each line in brackets.
    cash(TxnKind::deposit, "2025-01-10", T, "5000");         // [10995]
    buy("2025-02-03", T, "BRKN", "200", "20", "4");          // lot cost 4004 [6991]
    cash(TxnKind::dividend, "2025-03-14", T, "80", "ALDR");  // [7071]
    cash(TxnKind::tax, "2025-03-14", T, "12", "ALDR");       // withheld on it [7059]
    cash(TxnKind::interest, "2025-04-01", T, "15");          // [7074]
    cash(TxnKind::tax, "2025-04-01", T, "3");                // withheld on it [7071]
    // Sell 60 of lot 1: cost 4005 x 60/100 = 2403, proceeds 3000 - 6 = 2994, gain 591,
    // held 2024-03-04 .. 2025-05-02 = 424 days: long-term. [10065]
    sell("2025-05-02", T, "ALDR", "60", "50", "6");
    cash(TxnKind::tax, "2025-06-30", T, "7");                 // no payment that day [10058]
    cash(TxnKind::fee, "2025-07-01", T, "25");                // [10033]
    cash(TxnKind::withdrawal, "2025-08-01", T, "1500");       // [8533]
    transfer(TxnKind::transfer_in, "2025-09-01", T, "1000");  // cash from outside [9533]
    transfer(TxnKind::transfer_out, "2025-09-15", T, "300");  // cash to outside [9233]
    close("ALDR", "2025-10-01", "52");
    // 10 ALDR from outside at cost 30, acquired 2023-06-01, fee 2: market 520, cost 300. [9231]
    units(TxnKind::transfer_in, "2025-10-01", T, "ALDR", "10", "30", "2", "2023-06-01");
    ledger::post_split(db, "BRKN", day("2025-10-15"), dec("2"));  // 400 BRKN, cost 4004
    // Sell 100 BRKN: cost 4004 x 100/400 = 1001, proceeds 1100 - 1 = 1099, gain 98, short.
    sell("2025-11-03", T, "BRKN", "100", "11", "1");  // [10330]
    close("BRKN", "2025-11-20", "12");
    // 50 BRKN to outside: cost 3003 x 50/300 = 500.50, market 600.
    units(TxnKind::transfer_out, "2025-11-20", T, "BRKN", "50", nullptr, "0", nullptr);
    close("ALDR", "2025-11-28", "55");
    // 20 ALDR to the pension, fee 1, FIFO: the 2023 lot (10, cost 300) and 10 of lot 1
    // (1602 x 10/40 = 400.50): cost 700.50, market 20 x 55 = 1100. [10329]
    internal("2025-12-01", "ALDR", "20", "1");
    cash(TxnKind::dividend, "2025-12-15", P, "10", "ALDR");
    cash(TxnKind::tax, "2025-12-15", P, "1.5", "ALDR");
    const auto mistaken = cash(TxnKind::deposit, "2025-12-20", T, "999");
    ledger::void_transaction(db, mistaken, "entered twice");
    close("ALDR", "2025-12-31", "60");
    close("BRKN", "2025-12-31", "13");
    // Closing: Taxable 30 ALDR (cost 1201.50) = 1800, 250 BRKN (cost 2502.50) = 3250, cash
    // 10329 -> 15379. Pension 20 ALDR (cost 700.50) = 1200, cash 8.50 -> 1208.50.
  }
  void close(const char* symbol, const char* d, const char* price) {
    store::upsert_price(db, store::security_with_symbol(db, symbol).id, day(d), dec(price));
  }
  void transfer(TxnKind kind, const char* d, const char* account, const char* amount) {
    ledger::PostRequest r;
    r.kind = kind;
    r.date = day(d);
    r.account = account;
    r.amount = dec(amount);
    ledger::post(db, r);
  }
  void units(TxnKind kind, const char* d, const char* account, const char* symbol,
             const char* quantity, const char* price, const char* fee, const char* acquired) {
    ledger::PostRequest r;
    r.kind = kind;
    r.date = day(d);
    r.account = account;
    r.symbol = symbol;
    r.quantity = dec(quantity);
    if (price) r.price = dec(price);
    r.fee = dec(fee);
    if (acquired) r.acquired = day(acquired);
    ledger::post(db, r);
  }
  void internal(const char* d, const char* symbol, const char* quantity, const char* fee) {
    ledger::PostRequest r;
    r.kind = TxnKind::transfer_out;
    r.date = day(d);
    r.account = T;
    r.to_account = P;
    r.symbol = symbol;
    r.quantity = dec(quantity);
    r.fee = dec(fee);
    ledger::post(db, r);
  }
  report::Statement statement(std::optional<std::string> account = std::nullopt,
                              std::optional<int> long_term_days = std::nullopt) {
    report::StatementRequest r;
    r.year = 2025;
    r.account = std::move(account);
    r.benchmark = "IDXW";
    r.long_term_days = long_term_days;
    return report::build_statement(db, r);
  }
};

// Checks that each formula of every section gives its total exactly from the
// section's cells; returns how many there were.
std::size_t check_formulas(const report::Statement& statement) {
  std::size_t checked = 0;
  for (const auto& sec : report::statement_sections(statement)) {
    for (const auto& f : sec.formulas) {
      Decimal value;
      if (f.kind == report::Formula::Kind::difference) {
        value = sec.rows[f.first][f.column].number - sec.rows[f.last][f.column].number;
      } else {
        for (std::size_t r = f.first; r <= f.last; ++r)
          if (f.kind == report::Formula::Kind::sum || sec.rows[r][f.if_column].text == f.if_text)
            value += sec.rows[r][f.column].number;
      }
      CHECK_MESSAGE(value == sec.rows[f.row][f.column].number, sec.key, " row ", f.row);
      ++checked;
    }
  }
  return checked;
}

// The widest line of the statement's terminal text, in columns.
std::size_t widest_line(const report::Statement& statement) {
  std::istringstream text(report::statement_text(statement, {}));
  std::string line;
  std::size_t widest = 0;
  while (std::getline(text, line)) widest = std::max(widest, report::display_width(line));
  return widest;
}

std::string error_of(StatementLedger& k, report::StatementRequest r) {
  try {
    report::build_statement(k.db, r);
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}

}  // namespace

TEST_CASE("statement: the whole ledger's year adds up to the change in value exactly") {
  StatementLedger k;
  const auto s = k.statement();
  const auto& y = s.summary;
  CHECK(y.opening_value == dec("10495"));
  CHECK(y.deposits == dec("5000"));
  CHECK(y.withdrawals == dec("1500"));
  CHECK(y.transfers_in == dec("1520"));  // cash 1000 + 10 ALDR at 52
  CHECK(y.transfers_out == dec("900"));  // cash 300 + 50 BRKN at 12; the internal pair is no flow
  CHECK(y.dividends == dec("90"));
  CHECK(y.withholding == dec("23.5"));  // 12 + 3 + 7 + 1.5
  CHECK(y.interest == dec("15"));
  CHECK(y.fees == dec("28"));            // fee 25 + transfer fees 2 + 1
  CHECK(y.trade_fees == dec("11"));      // 4 + 6 + 1, inside cost and proceeds
  CHECK(y.realized_gain == dec("689"));  // 591 + 98
  CHECK(y.unrealized_opening == dec("495"));
  CHECK(y.unrealized_closing == dec("1845.5"));  // 598.50 + 747.50 + 499.50
  CHECK(y.unrealized_moved == dec("120.5"));     // ALDR in 520 - 300, BRKN out 600 - 500.50
  CHECK(y.closing_value == dec("16587.5"));
  CHECK(y.explained_closing() == dec("16587.5"));
  CHECK(y.difference() == Decimal());
}

TEST_CASE("statement: each account's year adds up, counting the internal transfer as a flow") {
  StatementLedger k;
  const auto taxable = k.statement(std::string(T)).summary;
  CHECK(taxable.closing_value == dec("15379"));
  CHECK(taxable.transfers_out == dec("2000"));  // 300 + 600 + 20 ALDR at 55 to the pension
  CHECK(taxable.difference() == Decimal());
  const auto pension = k.statement(std::string(P)).summary;
  CHECK(pension.opening_value == Decimal());
  CHECK(pension.transfers_in == dec("1100"));
  CHECK(pension.unrealized_moved == dec("399.5"));  // 1100 at market, 700.50 at cost
  CHECK(pension.closing_value == dec("1208.5"));
  CHECK(pension.difference() == Decimal());
}

TEST_CASE("statement: the holdings total is the closing value of the returns") {
  StatementLedger k;
  const auto s = k.statement();
  CHECK(s.holdings_total == s.summary.closing_value);
  REQUIRE(s.holdings.size() == 3);
  CHECK(s.holdings[0].line.account == P);
  CHECK(s.holdings[0].weight == dec("0.072344"));  // 1200 / 16587.50 = 0.0723436..., 6 places
}

TEST_CASE("statement: realized gains are the lot engine's parts disposed in the year") {
  StatementLedger k;
  const auto s = k.statement();
  const Book book = k.book();
  std::vector<RealizedPart> engine;
  for (const auto& p : book.realized())
    if (p.disposed.year() == 2025) engine.push_back(p);
  REQUIRE(s.gains.size() == engine.size());
  for (std::size_t i = 0; i < engine.size(); ++i) {
    CHECK(s.gains[i].part.lot_id == engine[i].lot_id);
    CHECK(s.gains[i].part.quantity == engine[i].quantity);
    CHECK(s.gains[i].part.proceeds == engine[i].proceeds);
    CHECK(s.gains[i].part.cost == engine[i].cost);
  }
  CHECK(s.realized_totals.long_term.gain == dec("591"));
  CHECK(s.realized_totals.long_term.proceeds == dec("2994"));
  CHECK(s.realized_totals.short_term.gain == dec("98"));
  CHECK(s.realized_totals.short_term.cost == dec("1001"));
}

TEST_CASE("statement: a long-term threshold in days reclassifies the gains") {
  StatementLedger k;
  const auto s = k.statement(std::nullopt, 500);  // the ALDR part was held 424 days
  CHECK(s.gains.front().days_held == 424);
  CHECK_FALSE(s.gains.front().long_term);
  CHECK(s.realized_totals.long_term.parts == 0);
  CHECK(s.realized_totals.short_term.gain == dec("689"));
  CHECK(s.long_term_rule == "long-term: held more than 500 days");
}

TEST_CASE(
    "statement: withholding is matched to the payment of the same account, day and security") {
  StatementLedger k;
  const auto s = k.statement();
  REQUIRE(s.income.size() == 3);
  CHECK(s.income[0].symbol == "ALDR");
  CHECK(s.income[0].withheld == dec("12"));
  CHECK(s.income[0].net() == dec("68"));
  CHECK(s.income[1].kind == "interest");
  CHECK(s.income[1].withheld == dec("3"));
  CHECK(s.income[2].account == P);
  CHECK(s.income[2].withheld == dec("1.5"));
  REQUIRE(s.other_tax.size() == 1);
  CHECK(s.other_tax[0].day == day("2025-06-30"));
  CHECK(s.other_tax[0].amount == dec("7"));
}

TEST_CASE("statement: trailing years the ledger does not cover are marked unavailable") {
  StatementLedger k;
  const auto s = k.statement();
  REQUIRE(s.performance.size() == 4);
  CHECK(s.performance[0].label == "this year");
  CHECK(s.performance[0].available);
  CHECK(s.performance[0].benchmark.has_value());
  CHECK(s.performance[1].label == "since inception");
  CHECK(s.performance[1].twr_annualized.has_value());  // 2024-03-01 .. 2025-12-31 is over a year
  CHECK_FALSE(s.performance[1].benchmark.has_value());
  CHECK(s.performance[1].benchmark_note == "IDXW has no close before 2024-03-01");
  CHECK_FALSE(s.performance[2].available);
  CHECK(s.performance[2].unavailable_reason ==
        "the ledger starts on 2024-03-01, less than 3 years before 2025-12-31");
}

TEST_CASE("statement: the year's returns are the returns module's") {
  StatementLedger k;
  const auto s = k.statement();
  perf::ReturnsRequest r;
  r.period.year = 2025;
  r.benchmark = "IDXW";
  const auto rep = perf::returns_report(k.db, r);
  CHECK(s.performance[0].twr == rep.result.twr.period);
  CHECK(s.performance[0].mwr_period == rep.result.mwr_figure->period);
  CHECK(s.performance[0].excess == rep.result.benchmark->excess_arithmetic);
  REQUIRE(s.months.size() == rep.result.months.size());
  CHECK(s.months[4].twr == rep.result.months[4].twr);
  CHECK(s.growth.back().level == doctest::Approx(1 + rep.result.twr.period).epsilon(1e-12));
  CHECK(s.benchmark_growth.back().level == doctest::Approx(1.1).epsilon(1e-12));  // 1100 / 1000
}

TEST_CASE("returns: a report from data loaded once equals one that reads the ledger itself") {
  StatementLedger k;
  const auto data = perf::LedgerData::load(k.db);
  for (const auto& account : {std::optional<std::string>(), std::optional<std::string>(P)}) {
    perf::ReturnsRequest r;
    r.account = account;
    r.period.year = 2025;
    r.benchmark = "IDXW";
    const auto direct = perf::returns_report(k.db, r);
    const auto shared = perf::returns_report(k.db, data, r);
    CHECK(shared.scope == direct.scope);
    CHECK(shared.inception == direct.inception);
    CHECK(shared.result.opening_value == direct.result.opening_value);
    CHECK(shared.result.closing_value == direct.result.closing_value);
    CHECK(shared.result.twr.period == direct.result.twr.period);
    CHECK(shared.income == direct.income);
    CHECK(shared.fees == direct.fees);
  }
}

TEST_CASE("returns: loaded data is a copy; a later deposit is not in it") {
  StatementLedger k;
  const auto data = perf::LedgerData::load(k.db);
  perf::ReturnsRequest r;
  r.period.year = 2025;
  const auto before = perf::returns_report(k.db, r);
  ledger::PostRequest deposit;
  deposit.kind = TxnKind::deposit;
  deposit.date = day("2025-12-30");
  deposit.account = T;
  deposit.amount = dec("250");
  ledger::post(k.db, deposit);
  CHECK(perf::returns_report(k.db, data, r).result.closing_value == before.result.closing_value);
  CHECK(perf::returns_report(k.db, r).result.closing_value ==
        before.result.closing_value + dec("250"));
}

TEST_CASE("statement: the year starting at a ledger's first day says so") {
  StatementLedger k;
  report::StatementRequest r;
  r.year = 2024;
  const auto s = report::build_statement(k.db, r);
  CHECK(s.started_in_year);
  CHECK(s.from == day("2024-03-01"));
  CHECK(s.summary.opening_value == Decimal());
  CHECK(s.summary.difference() == Decimal());
}

TEST_CASE("statement: unknown account, unknown benchmark and bad thresholds name the option") {
  StatementLedger k;
  report::StatementRequest r;
  r.year = 2025;
  r.account = "Nobody";
  CHECK(error_of(k, r) == "--account: there is no account named 'Nobody'");
  r.account.reset();
  r.benchmark = "NOPE";
  CHECK(error_of(k, r) == "--benchmark: there is no security with symbol 'NOPE'");
  r.benchmark.reset();
  r.long_term_days = 0;
  CHECK(error_of(k, r) == "--long-term-days: 0 is not a number of days; give 1 or more");
}

TEST_CASE("statement: a year before the ledger's first day is refused") {
  StatementLedger k;
  report::StatementRequest r;
  r.year = 2023;
  CHECK(error_of(k, r) ==
        "--year: ends on 2023-12-31, before the first transaction day 2024-03-01");
}

TEST_CASE("regression: a statement of years 1 to 5 failed with an internal date-range message") {
  StatementLedger k;
  report::StatementRequest r;
  for (const int year : {0, 1, 4, 5, 10000}) {
    r.year = year;
    CHECK(error_of(k, r) == fmt::format("--year: {} is outside the years a statement covers (6 to "
                                        "9999; it looks back 5 years)",
                                        year));
  }
}

TEST_CASE("statement: a benchmark without a close before the year is refused") {
  StatementLedger k;
  report::StatementRequest r;
  r.year = 2024;
  r.benchmark = "IDXW";
  CHECK(error_of(k, r) ==
        "--benchmark IDXW: needs a close on or before 2024-02-29, the day before the period; its "
        "first close is on 2024-12-31");
}

TEST_CASE("statement: an account in another currency that holds nothing needs no rate") {
  StatementLedger k;
  Account a;
  a.name = "Harbor Sterling";
  a.currency = "GBP";
  store::insert_account(k.db, a);
  const auto before = k.statement();
  report::StatementRequest r;
  r.year = 2025;
  const auto s = report::build_statement(k.db, r);
  CHECK(s.currency == "USD");
  CHECK(s.translated);
  CHECK(s.summary.translation == Decimal());
  CHECK(s.summary.difference() == Decimal());
  CHECK(s.summary.closing_value == before.summary.closing_value);
}

TEST_CASE("statement: building it changes nothing in the ledger") {
  StatementLedger k;
  const auto before = k.dump();
  k.statement();
  CHECK(k.dump() == before);
}

TEST_CASE("statement forms: the summary table shows the check and every piece") {
  StatementLedger k;
  const auto sections = report::statement_sections(k.statement());
  const auto& summary = sections.front();
  CHECK(summary.key == "summary");
  Decimal sum;
  for (std::size_t i = 0; i < summary.emphasised.front(); ++i) sum += summary.rows[i][1].number;
  CHECK(sum == dec("16587.5"));  // the signed pieces, opening included, add up to the closing
  CHECK(summary.notes.front() == "Check: the pieces add up to the closing value exactly.");
}

TEST_CASE("statement forms: terminal text stays within 100 columns") {
  StatementLedger k;
  CHECK(widest_line(k.statement()) <= 100);
}

TEST_CASE("statement forms: HTML escapes user text and refers to nothing outside") {
  StatementLedger k;
  k.account("<b>Tom & \"Jerry\"</b>");
  const auto html = report::statement_html(k.statement(), report::Paper::a4);
  CHECK(html.find("&lt;b&gt;Tom &amp; &quot;Jerry&quot;&lt;/b&gt;") != std::string::npos);
  CHECK(html.find("<b>Tom") == std::string::npos);
  CHECK(html.find("http") == std::string::npos);
  CHECK(html.find("//") == std::string::npos);
  CHECK(html.find("src=") == std::string::npos);
  CHECK(html.find("<script") == std::string::npos);
  CHECK(html.find("<svg") != std::string::npos);
}

TEST_CASE("statement forms: CSV writes one file per section and refuses a missing parent") {
  StatementLedger k;
  const auto s = k.statement();
  const auto dir =
      std::filesystem::temp_directory_path() / ("keel-csv-" + std::to_string(::getpid()));
  std::filesystem::remove_all(dir);
  report::write_statement_csv(s, dir, "--csv");
  for (const char* key :
       {"summary", "performance", "monthly", "holdings", "realized", "income", "cautions"})
    CHECK(std::filesystem::exists(dir / (std::string(key) + ".csv")));
  std::ifstream summary(dir / "summary.csv");
  std::string header, first;
  std::getline(summary, header);
  std::getline(summary, first);
  CHECK(header == "item,amount\r");
  CHECK(first == "opening value (close of 2024-12-31),10495\r");
  std::filesystem::remove_all(dir);
  CHECK_THROWS_WITH_AS(report::write_statement_csv(s, dir / "a" / "b", "--csv"),
                       doctest::Contains("cannot create the folder"), InputError);
}

TEST_CASE("statement forms: every formula gives its total exactly from the section's cells") {
  StatementLedger k;
  const std::size_t checked = check_formulas(k.statement());
  // summary 2, holdings 3, realized 9, income 3, withholding 2 (one country and the total)
  CHECK(checked == 19);
}

TEST_CASE(
    "statement forms: the summary's formulas add the pieces and subtract for the difference") {
  StatementLedger k;
  const auto sections = report::statement_sections(k.statement());
  const auto& summary = sections.front();
  REQUIRE(summary.formulas.size() == 2);
  CHECK(summary.formulas[0].kind == report::Formula::Kind::sum);
  CHECK(summary.formulas[0].first == 0);
  CHECK(summary.formulas[0].last == 11);
  CHECK(summary.rows[summary.formulas[0].row][0].text == "opening value plus the pieces");
  CHECK(summary.formulas[1].kind == report::Formula::Kind::difference);
  CHECK(summary.rows[summary.formulas[1].row][0].text == "difference");
}

TEST_CASE("statement forms: HTML is laid out for the paper asked for") {
  StatementLedger k;
  const auto s = k.statement();
  CHECK(report::statement_html(s, report::Paper::a4).find("@page { size: A4;") !=
        std::string::npos);
  CHECK(report::statement_html(s, report::Paper::letter).find("@page { size: letter;") !=
        std::string::npos);
}

TEST_CASE("statement forms: the running title cannot end the style element") {
  StatementLedger k;
  auto s = k.statement();
  s.scope = "</style><b>\"x\\";
  const auto html = report::statement_html(s, report::Paper::a4);
  CHECK(html.find("</style><b>") == std::string::npos);
  CHECK(html.find("@top-left { content: \"Statement 2025 \u2014 \\3c /style\\3e \\3c b\\3e "
                  "\\\"x\\\\\";") != std::string::npos);
}

TEST_CASE("statement forms: HTML date cells never wrap, dates inside text neither") {
  StatementLedger k;
  const auto html = report::statement_html(k.statement(), report::Paper::a4);
  CHECK(html.find(".num, .date { white-space: nowrap; }") != std::string::npos);
  CHECK(html.find("<td class=\"date\">2024-03-04</td>") != std::string::npos);
  CHECK(html.find("opening value (close of <span class=\"date\">2024-12-31</span>)") !=
        std::string::npos);
}

TEST_CASE("statement forms: the allocation chart has one colour, not the portfolio's") {
  StatementLedger k;
  const auto html = report::statement_html(k.statement(), report::Paper::a4);
  const auto start = html.find("aria-label=\"Allocation at the end of the period\"");
  REQUIRE(start != std::string::npos);
  const auto chart = html.substr(start, html.find("</svg>", start) - start);
  std::set<std::string> fills;
  for (auto at = chart.find("fill=\""); at != std::string::npos; at = chart.find("fill=\"", at + 1))
    fills.insert(chart.substr(at + 6, 7));
  CHECK(fills == std::set<std::string>{"#5b6b76"});
  CHECK(chart.find("#b5562b") == std::string::npos);  // the portfolio's copper
  CHECK(chart.find(">cash</text>") != std::string::npos);
}

TEST_CASE("statement paper: a4 and letter, any case; anything else is refused") {
  CHECK(report::parse_paper("a4") == report::Paper::a4);
  CHECK(report::parse_paper("LETTER") == report::Paper::letter);
  CHECK_THROWS_WITH_AS(report::parse_paper("legal"),
                       "'legal' is not a paper size; expected a4 or letter", InputError);
}

// Sizes as glibc's locale data give them (LC_PAPER height and width in mm):
// 297 x 210 for A4 (ISO 216), 279 x 216 for Letter (8.5 x 11 in, rounded).
TEST_CASE("statement paper: the locale's size picks letter only for 279 x 216 mm") {
  CHECK(report::paper_of_size(279, 216) == report::Paper::letter);
  CHECK(report::paper_of_size(297, 210) == report::Paper::a4);
  CHECK(report::paper_of_size(356, 216) == report::Paper::a4);  // legal: A4, the default
  CHECK(report::paper_of_size(0, 0) == report::Paper::a4);
}

namespace {

// A euro account holding a dollar stock (invented), statement year 2025.
// Rates are USD per EUR. By hand, EUR cash and USD cash lots after each row:
//   01-02 deposit 10000 EUR                                   EUR 10000
//   01-03 exchange 4000 EUR into USD at 1.25                  EUR 6000; USD 5000 (cost 4000)
//   01-06 buy 40 HLX at 100 USD from dollar cash, day 1.25    lot cost 3200 EUR (4000 USD);
//         the 4000 USD spent cost 3200: currency gain 0       USD 1000 (cost 800)
//   06-16 dividend 60 USD kept, day rate 1.20: 50.00 EUR      USD +60 (cost 50)
//   06-16 tax 9 USD on it, day rate 1.20: 7.50 EUR; the 9 USD
//         taken from the oldest lot cost 7.20: gain 0.30      USD 991 (cost 792.80), 60 (50)
//   07-01 dividend 24 USD settled at the row's 1.28: 18.75    EUR 6018.75
//   09-01 sell 10 HLX at 120 USD, day rate 1.20: proceeds 1000.00 EUR, cost 800 (1000 USD):
//         gain 200; price part (1200 - 1000) / 1.20 = 166.67, currency part 33.33
//                                                             USD +1200 (cost 1000)
//   close 12-31: HLX 110 USD, rate 1.10. 30 HLX = 3300 USD = 3000.00 EUR (cost 2400:
//         unrealized 600); USD cash 2251 = 2046.36 EUR (cost 1842.80: 203.56 unrealized)
//   closing value 6018.75 + 3000 + 2046.36 = 11065.11
//   = 10000 + dividends 68.75 - tax 7.50 + realized 200 + unrealized 600
//     + currency gain realized 0.30 + unrealized on cash 203.56
struct EuroStatement : LedgerFixture {
  EuroStatement() {
    account("Depot", BasisMethod::fifo, false, "EUR");
    security("HLX");  // trades in USD
    for (const auto& [d, r] : std::vector<std::pair<const char*, const char*>>{
             {"2025-01-02", "1.25"}, {"2025-06-02", "1.20"}, {"2025-12-31", "1.10"}}) {
      store::WriteTransaction tx(db);
      std::string existing;
      store::upsert_fx_rate(db, {"EUR", "USD", day(d), dec(r)}, false, existing);
      tx.commit();
    }
    cash(TxnKind::deposit, "2025-01-02", "Depot", "10000");
    ledger::PostRequest x;
    x.kind = TxnKind::exchange;
    x.date = day("2025-01-03");
    x.account = "Depot";
    x.amount = dec("4000");
    x.currency = "EUR";
    x.to_currency = "USD";
    x.rate = dec("1.25");
    ledger::post(db, x);
    buy("2025-01-06", "Depot", "HLX", "40", "100");
    cash(TxnKind::dividend, "2025-06-16", "Depot", "60", "HLX");
    cash(TxnKind::tax, "2025-06-16", "Depot", "9", "HLX");
    ledger::PostRequest settled;
    settled.kind = TxnKind::dividend;
    settled.date = day("2025-07-01");
    settled.account = "Depot";
    settled.symbol = "HLX";
    settled.amount = dec("24");
    settled.rate = dec("1.28");
    ledger::post(db, settled);
    sell("2025-09-01", "Depot", "HLX", "10", "120");
    closes({{"HLX", "2025-12-31", "110"}});
  }
  report::Statement statement(std::optional<std::string> currency = std::nullopt) {
    report::StatementRequest r;
    r.year = 2025;
    r.currency = std::move(currency);
    return report::build_statement(db, r);
  }
};

}  // namespace

TEST_CASE("statement in two currencies: the euro year adds up to the euro closing value exactly") {
  EuroStatement k;
  const auto s = k.statement();
  const auto& y = s.summary;
  CHECK(s.currency == "EUR");
  CHECK(s.foreign);
  CHECK(y.deposits == dec("10000"));
  CHECK(y.dividends == dec("68.75"));
  CHECK(y.withholding == dec("7.50"));
  CHECK(y.realized_gain == dec("200.00"));
  CHECK(y.unrealized_closing == dec("600.00"));
  CHECK(y.fx_cash_realized == dec("0.30"));
  CHECK(y.fx_cash_unrealized_closing == dec("203.56"));
  CHECK(y.closing_value == dec("11065.11"));
  CHECK(s.holdings_total == y.closing_value);
  CHECK(y.difference() == dec("0"));
}

TEST_CASE("statement in two currencies: a position shows its local price, the rate and euros") {
  EuroStatement k;
  const auto s = k.statement();
  REQUIRE(s.holdings.size() == 1);
  const auto& p = s.holdings.front().line;
  CHECK(p.price == dec("110"));
  CHECK(p.currency == "USD");
  CHECK(p.local_value == dec("3300"));
  REQUIRE(p.rate);
  CHECK(p.rate->describe() == "EUR/USD 1.1 (2025-12-31)");
  CHECK(p.market_value == dec("3000.00"));
  REQUIRE(s.cash.size() == 2);
  CHECK(s.cash[1].currency == "USD");
  CHECK(s.cash[1].amount == dec("2251"));
  CHECK(s.cash[1].cost == dec("1842.80"));
  CHECK(s.cash[1].value == dec("2046.36"));
}

TEST_CASE("statement in two currencies: a sale's gain splits into its price and currency parts") {
  EuroStatement k;
  const auto s = k.statement();
  REQUIRE(s.gains.size() == 1);
  CHECK(s.gains.front().part.gain() == dec("200.00"));
  CHECK(s.gains.front().part.price_part() == dec("166.67"));
  CHECK(s.gains.front().part.currency_part() == dec("33.33"));
}

TEST_CASE("statement in two currencies: income converts at the row's rate, else the day's") {
  EuroStatement k;
  const auto s = k.statement();
  REQUIRE(s.income.size() == 2);
  const auto& kept = s.income[0];
  CHECK(kept.gross == dec("50.00"));
  CHECK(kept.withheld == dec("7.50"));
  REQUIRE(kept.converted);
  CHECK(kept.converted->local == dec("60"));
  CHECK(kept.converted->rate() == dec("1.20"));
  CHECK(kept.converted->source() == "stored, 2025-06-02");
  const auto& settled = s.income[1];
  CHECK(settled.gross == dec("18.75"));
  REQUIRE(settled.converted);
  CHECK(settled.converted->rate() == dec("1.28"));
  CHECK(settled.converted->source() == "the row's rate");
  CHECK(s.withholding.total == dec("7.50"));
}

TEST_CASE(
    "statement in another currency: a payment in another currency than its account's shows "
    "both steps") {
  EuroStatement k;
  const auto s = k.statement("USD");
  REQUIRE(s.income.size() == 2);
  // 60 USD booked at the stored 1.20 as 50.00 EUR, that translated at the day's EUR/USD 1.20.
  const auto& kept = s.income[0];
  REQUIRE(kept.converted);
  CHECK(kept.converted->currency == "USD");
  CHECK(kept.converted->local == dec("60"));
  CHECK(kept.converted->rate() == dec("1.20"));
  REQUIRE(kept.translated);
  CHECK(kept.translated->currency == "EUR");
  CHECK(kept.translated->local == dec("50.00"));
  // The second step's rate is dollars per euro, as stored: 50.00 x 1.20 = 60.00 exactly.
  CHECK(kept.translated->rate() == dec("1.20"));
  CHECK(kept.translated->source() == "stored, 2025-06-02");
  CHECK(kept.gross == dec("60.00"));
  // 24 USD settled at the row's 1.28 as 18.75 EUR, then 18.75 x 1.20.
  const auto& settled = s.income[1];
  REQUIRE(settled.translated);
  CHECK(settled.converted->source() == "the row's rate");
  CHECK(settled.translated->local == dec("18.75"));
  CHECK(settled.gross == dec("22.50"));
  const auto text = report::statement_text(s, report::Style{});
  CHECK(widest_line(s) <= 100);
  CHECK(text.find("then stored, 2025-06-02") != std::string::npos);
  CHECK(text.find("A payment in a third currency has two lines") != std::string::npos);
}

TEST_CASE("statement in two currencies: a payment with one step shows no second") {
  EuroStatement k;
  const auto s = k.statement();
  for (const auto& i : s.income) CHECK_FALSE(i.translated);
  CHECK(report::statement_text(s, report::Style{}).find("two lines") == std::string::npos);
}

TEST_CASE("statement in two currencies: spending dollar cash shows its gain apart from prices") {
  EuroStatement k;
  const auto s = k.statement();
  // The buy spent 4000 USD at no gain; the tax 9 USD, worth 7.50, cost 7.20.
  REQUIRE(s.fx_cash_gains.size() == 2);
  CHECK(s.fx_cash_gains[0].part.gain() == dec("0"));
  CHECK(s.fx_cash_gains[1].part.quantity == dec("9"));
  CHECK(s.fx_cash_gains[1].part.proceeds == dec("7.50"));
  CHECK(s.fx_cash_gains[1].part.cost == dec("7.20"));
  const auto sections = report::statement_sections(s);
  const auto& summary = sections.front();
  CHECK(std::any_of(summary.rows.begin(), summary.rows.end(), [](const auto& row) {
    return row[0].text == "currency gain on foreign cash, realized" && row[1].number == dec("0.30");
  }));
}

TEST_CASE("statement forms in two currencies: every formula gives its total exactly") {
  EuroStatement k;
  const auto statement = k.statement();
  const std::size_t checked = check_formulas(statement);
  std::set<std::string> keys;
  for (const auto& sec : report::statement_sections(statement)) keys.insert(sec.key);
  for (const char* key : {"realized_currency", "income_converted", "currency_gains"})
    CHECK_MESSAGE(keys.count(key) == 1, key);
  // summary 2, holdings 3, realized 9, realized_currency 3, income 3, currency_gains 2,
  // withholding 2
  CHECK(checked == 24);
}

TEST_CASE("statement forms in two currencies: terminal text stays within 100 columns") {
  EuroStatement k;
  CHECK(widest_line(k.statement()) <= 100);
}
