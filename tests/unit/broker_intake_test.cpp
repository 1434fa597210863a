// Broker files as they come: action rules, errors in the file's words,
// corrections of booked refs, and OFX statements.
#include <doctest/doctest.h>

#include "io/ledger_intake.h"
#include "io/mapping.h"
#include "io/ofx.h"
#include "ledger_fixture.h"
#include "store/fingerprint.h"
#include "test_files.h"

using namespace keel;
using namespace keel::testing;
using keel::io::ImportOptions;
using keel::io::ImportRefused;
using keel::io::Mapping;

namespace {

const char* kRules = R"(for = "transactions"
[defaults]
account = "Main"
[actions]
column = "Action"
skip = ["Sweep"]

[[actions.rule]]
when = "Buy"
kind = "buy"
quantity = "Qty"
price = "Price"

[[actions.rule]]
when = "Div"
kind = "dividend"
amount = "Net"

[[actions.rule]]
when = "Cash"
when_amount = "negative"
kind = "withdrawal"
amount = { credit = "In", debit = "Out" }

[[actions.rule]]
when = "Cash"
when_amount = "positive"
kind = "deposit"
amount = { credit = "In", debit = "Out" }
)";

std::string mapping_error(const std::string& toml) {
  try {
    Mapping::parse(toml, "m.toml");
  } catch (const InputError& e) {
    return e.what();
  }
  return "accepted";
}

struct Broker {
  test::TempDir dir;
  LedgerFixture f;
  Broker() {
    f.account("Main");
    f.security("QRX");
  }
  io::LedgerImportSummary import(const std::string& csv, const std::string& toml,
                                 ImportOptions options = {}) {
    if (!toml.empty()) options.mapping = Mapping::parse(toml, "m.toml");
    return io::import_transactions(f.db, dir.write("b.csv", csv), options);
  }
  std::vector<std::string> refused(const std::string& csv, const std::string& toml,
                                   ImportOptions options = {}) {
    const std::string before = f.dump();
    std::vector<std::string> lines;
    try {
      import(csv, toml, options);
      FAIL("import was accepted");
    } catch (const ImportRefused& e) {
      lines = e.lines();
    }
    CHECK(f.dump() == before);
    return lines;
  }
  std::string file() const { return (dir.path() / "b.csv").string(); }
};

const char* kHeader = "Date,Action,Symbol,Qty,Price,Net,In,Out,Ref\n";

}  // namespace

TEST_CASE("mapping actions: an action sent to no kind is refused naming the rule's line") {
  CHECK(mapping_error("[actions]\ncolumn = \"A\"\n[[actions.rule]]\nwhen = \"Buy\"\n") ==
        "m.toml:3: key 'actions.rule': action 'Buy' goes to no kind; add kind = \"...\"");
  CHECK(mapping_error("[actions]\ncolumn = \"A\"\n[[actions.rule]]\nwhen = \"Buy\"\nkind = "
                      "\"purchase\"\n") ==
        "m.toml:5: key 'actions.rule.kind': action 'Buy' goes to no kind: unknown transaction "
        "kind 'purchase'; expected one of: deposit, withdrawal, buy, sell, dividend, interest, "
        "tax, fee, transfer_in, transfer_out, exchange");
}

TEST_CASE("mapping actions: two rules matching the same rows are refused naming the second") {
  CHECK(mapping_error("[actions]\ncolumn = \"A\"\n[[actions.rule]]\nwhen = \"Buy\"\nkind = "
                      "\"buy\"\nquantity = \"Q\"\n\n[[actions.rule]]\nwhen = [\"Sell\", \"BUY\"]\n"
                      "kind = \"sell\"\n") ==
        "m.toml:8: key 'actions.rule': matches the same rows as the rule on line 3 (action 'BUY')");
}

TEST_CASE("mapping actions: an action both skipped and booked is refused") {
  CHECK(mapping_error("[actions]\ncolumn = \"A\"\nskip = [\"Fee\"]\n[[actions.rule]]\nwhen = "
                      "\"fee\"\nkind = \"fee\"\n") ==
        "m.toml:4: key 'actions.rule': action 'fee' is also listed in actions.skip");
}

TEST_CASE("mapping actions: rules told apart by the amount's sign are accepted") {
  const Mapping m = Mapping::parse(kRules, "m.toml");
  REQUIRE(m.actions);
  CHECK(m.actions->rules.size() == 4);
  CHECK(m.actions->rules[2].when_amount_negative == true);
  CHECK(m.actions->rules[3].figures.at("amount").credit == "in");
}

TEST_CASE("broker import: each row is booked by its action's rule, skipped rows are counted") {
  Broker b;
  const auto sum = b.import(std::string(kHeader) +
                                "2024-01-02,Cash,,,,,1000,,c1\n"
                                "2024-01-03,Buy,QRX,5,10,-50,,,b1\n"
                                "2024-01-04,Sweep,,,,0,,,\n"
                                "2024-01-05,Div,QRX,,,3.5,,,d1\n"
                                "2024-01-06,Cash,,,,,,20,c2\n",
                            kRules);
  CHECK(sum.added == 4);
  REQUIRE(sum.skipped.size() == 1);
  CHECK(sum.skipped[0] == std::pair<std::string, std::uint64_t>{"Sweep", 1});
  const Book book = b.f.book();
  CHECK(book.account(1).cash == dec("933.5"));  // 1000 - 50 + 3.5 - 20
}

TEST_CASE("broker import: an action no rule books is refused naming the column and value") {
  Broker b;
  const auto lines = b.refused(std::string(kHeader) + "2024-01-02,Split,QRX,,,,,,s1\n", kRules);
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] == b.file() +
                        ":2: column 'Action' = Split: no rule of the mapping books this action "
                        "(rules: 'Buy', 'Div', 'Cash'); add a rule or list it under actions.skip");
}

TEST_CASE("broker import: a credit and a debit on one row are refused") {
  Broker b;
  const auto lines = b.refused(std::string(kHeader) + "2024-01-02,Cash,,,,,10,5,c1\n", kRules);
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] == b.file() +
                        ":2: columns 'In' and 'Out' are both filled; a row has money in or money "
                        "out, not both");
}

TEST_CASE("broker import: a negative figure under a positive rule names the file's column") {
  Broker b;
  const auto lines = b.refused(std::string(kHeader) + "2024-01-05,Div,QRX,,,-3.5,,,d1\n", kRules);
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] == b.file() +
                        ":2: column 'Net' = -3.5: a dividend row's amount must be positive here; "
                        "if the file writes it negative, say sign = \"negative\" or \"either\" in "
                        "the mapping's rule on line 14");
}

TEST_CASE("broker import: a zero amount is refused in the file's words, not an option's") {
  Broker b;
  const auto lines = b.refused(std::string(kHeader) + "2024-01-05,Div,QRX,,,0.00,,,d1\n", kRules);
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] == b.file() +
                        ":2: column 'Net' = 0.00: dividend: must be positive, not 0 (the kind "
                        "gives the direction)");
}

TEST_CASE("broker import: a rate where none applies is refused in the file's words") {
  Broker b;
  const auto lines =
      b.refused("date,account,kind,amount,currency,rate\n2024-01-02,Main,deposit,10,EUR,1.1\n", "");
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] == b.file() +
                        ":2: column 'rate' = 1.1: deposit: does not apply (a deposit in EUR moves "
                        "cash in EUR; use 'exchange' to convert it)");
  const auto rate =
      b.refused("date,account,kind,amount,currency,rate\n2024-01-02,Main,deposit,10,USD,1.1\n", "");
  REQUIRE(rate.size() == 1);
  CHECK(rate[0] == b.file() +
                       ":2: column 'rate' = 1.1: deposit: does not apply: the row is in USD, the "
                       "currency of account 'Main'");
}

TEST_CASE("corrections: a booked ref with other content is refused with every difference") {
  Broker b;
  b.import(
      "date,account,kind,symbol,quantity,price,fee,ref\n"
      "2024-01-02,Main,transfer_in,QRX,10,5,,t1\n"
      "2024-01-03,Main,sell,QRX,4,6,1,s1\n",
      "");
  const auto lines = b.refused(
      "date,account,kind,symbol,quantity,price,fee,ref\n"
      "2024-01-02,Main,transfer_in,QRX,10,5,,t1\n"
      "2024-01-03,Main,sell,QRX,4,6.5,1.25,s1\n",
      "");
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] == b.file() +
                        ":3: column 'ref' = s1: already booked as transaction 2 with other "
                        "content: price 6 -> 6.5, fee 1 -> 1.25; to book the change, import with "
                        "--book-corrections (voids 2 and books this row)");
}

TEST_CASE("corrections: --book-corrections voids the old row, books the new one, keeps the ref") {
  Broker b;
  const std::string first =
      "date,account,kind,symbol,quantity,price,ref\n2024-01-02,Main,transfer_in,QRX,10,5,t1\n";
  b.import(first, "");
  const std::string changed =
      "date,account,kind,symbol,quantity,price,ref\n2024-01-02,Main,transfer_in,QRX,12,5,t1\n";
  ImportOptions options;
  options.book_corrections = true;
  const auto sum = b.import(changed, "", options);
  CHECK(sum.corrected == 1);
  CHECK(sum.added == 0);
  CHECK(b.f.book().account(1).positions.at(1).quantity() == dec("12"));
  const auto txns = store::list_transactions(b.f.db);
  REQUIRE(txns.size() == 3);
  CHECK(txns[1].kind == TxnKind::void_entry);
  CHECK(txns[2].ref == "t1");  // through the correction record
  // The corrected line is now booked; the first version is not booked again.
  CHECK(b.import(changed, "").already_booked == 1);
  CHECK(b.refused(first, "").size() == 1);
}

TEST_CASE("ofx: the SGML and the XML form of a statement read the same") {
  const auto sgml = io::read_ofx(KEEL_SOURCE_DIR "/examples/import/broker-statement.ofx");
  const auto xml = io::read_ofx(KEEL_SOURCE_DIR "/examples/import/broker-statement-v2.ofx");
  CHECK(sgml.as_of == day("2024-01-31"));
  CHECK(sgml.currency == "EUR");
  CHECK(sgml.account == "brokerage.invalid 77-1234");
  REQUIRE(sgml.cash);
  CHECK(*sgml.cash == dec("126639.6"));
  REQUIRE(sgml.transactions.size() == 6);
  const auto& buy = sgml.transactions[0];
  CHECK(buy.element == "BUYSTOCK");
  CHECK(buy.fitid == "F-1001");
  CHECK(buy.date == day("2024-01-08"));  // DTTRADE, not DTSETTLE
  CHECK(buy.kind == TxnKind::buy);
  CHECK(buy.quantity == dec("100"));
  CHECK(buy.price == dec("1234.5"));
  CHECK(buy.fee == dec("4.95"));
  CHECK(sgml.transactions[2].withheld == dec("18"));
  REQUIRE(sgml.positions.size() == 2);
  CHECK(sgml.positions[0].security == "QRX");
  CHECK(sgml.positions[0].units == dec("120"));
  REQUIRE(xml.transactions.size() == sgml.transactions.size());
  for (std::size_t i = 0; i < xml.transactions.size(); ++i) {
    CHECK(xml.transactions[i].fitid == sgml.transactions[i].fitid);
    CHECK(xml.transactions[i].kind == sgml.transactions[i].kind);
    CHECK(xml.transactions[i].amount == sgml.transactions[i].amount);
    CHECK(xml.transactions[i].date == sgml.transactions[i].date);
  }
  CHECK(xml.cash == sgml.cash);
}

TEST_CASE("ofx: an aggregate left open is refused with its line and element") {
  test::TempDir dir;
  const auto p = dir.write("s.ofx",
                           "OFXHEADER:100\n\n<OFX>\n<INVSTMTMSGSRSV1>\n<INVSTMTRS>\n"
                           "<DTASOF>20240131\n</INVSTMTMSGSRSV1>\n</OFX>\n");
  CHECK_THROWS_WITH_AS(io::read_ofx(p),
                       (p.string() + ":7: element <INVSTMTMSGSRSV1>: closes an element while "
                                     "<INVSTMTRS> opened on line 5 is still open")
                           .c_str(),
                       InputError);
  const auto q = dir.write("t.ofx", "OFXHEADER:100\n\n<OFX>\n<INVSTMTRS>\n");
  CHECK_THROWS_WITH_AS(
      io::read_ofx(q),
      (q.string() + ":4: element <INVSTMTRS>: opened here and never closed").c_str(), InputError);
  const auto r = dir.write("u.ofx", "OFXHEADER:100\n\n<OFX>\n</BUYSTOCK>\n</OFX>\n");
  CHECK_THROWS_WITH_AS(io::read_ofx(r),
                       (r.string() + ":4: element <BUYSTOCK>: closes no open element").c_str(),
                       InputError);
}

TEST_CASE("ofx: a double from libofx reads back as the file's text up to 15 digits") {
  // Shortest round-trip formatting (fmt, after Steele and White / Ryu): a
  // decimal of at most 15 significant digits is the only one of that length
  // that rounds to its double (IEEE 754 binary64 holds 15.95 digits).
  for (const char* text : {"0.1", "123454.95", "1234.5", "-2.5", "99999999999999.9", "0.000001"})
    CHECK(io::decimal_from_double(std::stod(text)) == dec(text));
}
