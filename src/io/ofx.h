// OFX investment statements (Open Financial Exchange 1.6 SGML and 2.x XML),
// read through Debian's libofx, in keel's terms.
//
// Contract
//  - read_ofx() first checks that the file is well formed: every aggregate
//    element opened is closed in order (leaf elements may omit their end tag,
//    as OFX 1.x allows), inside one <OFX> root. Anything else is refused with
//    InputError "FILE:LINE: element <NAME>: reason". Files over 64 MiB or
//    nested deeper than 64 elements are refused.
//  - libofx then gives the statement's account, currency, transactions,
//    positions and cash balance (INVBAL AVAILCASH). Its numbers are doubles:
//    keel takes the shortest text that reads back as the same double, which
//    is the text of the file for numbers of up to 15 significant digits.
//    Days are taken from the file's own text (DTTRADE, DTPOSTED, DTASOF: the
//    first eight digits), not from libofx's time conversion.
//  - Each transaction keeps its FITID (the exactly-once key), its line and
//    its element. Elements keel does not book (REINVEST, RETOFCAP, SPLIT,
//    CLOSUREOPT) carry `refused` with the reason; JRNLFUND and JRNLSEC
//    (journals between sub-accounts of the same account) are `skipped`.
//  - libofx runs in keel's OFX module, keel-ofx.so (io/ofx_module.h), loaded
//    on the first OFX file only: from where `cmake --install` puts it
//    relative to the program (<prefix>/lib/keel for <prefix>/bin/keel), else
//    from the program's own folder (the build folder). A module that is
//    missing or cannot be loaded is an InputError naming the file, the
//    folders looked in or the loader's reason.
//  - Not exposed by libofx 0.10 and so not read: cost basis of positions,
//    per-transaction sub-account moves beyond the above, and margin and
//    short balances (read but not used).
#pragma once

#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "model/records.h"

namespace keel::io {

struct OfxTransaction {
  std::uint64_t line = 0;  // line of the element's start tag
  std::string element;     // "BUYSTOCK", "INCOME", "INVBANKTRAN", ...
  std::string fitid;
  Date date;
  TxnKind kind = TxnKind::deposit;
  std::string security;  // ticker, else the OFX unique id; empty for cash
  std::optional<Decimal> quantity, price, amount, fee;
  std::optional<Decimal> withheld;  // INCOME WITHHOLDING: booked as a separate tax row
  std::string currency;             // a transaction's own currency, if it names one
  std::string note;
  std::string refused;  // why keel does not book this element (empty: booked)
  bool skipped = false;
};

struct OfxPosition {
  std::uint64_t line = 0;
  std::string security;
  Decimal units;  // negative for a short position
};

struct OfxStatement {
  std::string account;   // as the file names it: "BROKERID ACCTID"
  std::string currency;  // CURDEF
  Date as_of;            // DTASOF of the statement
  std::optional<Decimal> cash;
  std::vector<OfxTransaction> transactions;
  std::vector<OfxPosition> positions;
};

// Whether the file starts like an OFX file (an OFXHEADER line, or an XML
// declaration followed by an OFX processing instruction).
bool is_ofx_file(const std::filesystem::path& file);
bool looks_like_ofx(std::string_view text);

// Throws InputError naming the file, and the line and element where it can.
OfxStatement read_ofx(const std::filesystem::path& file);

// The double libofx gives, as the shortest decimal text that reads back as
// the same double.
Decimal decimal_from_double(double value);

}  // namespace keel::io
