// Booking an OFX investment statement's transactions (see io/ofx.h and
// io/ledger_intake.h): the same all-or-nothing, exactly-once booking as a
// CSV file, with each FITID as the row's ref.
#include <fmt/format.h>

#include "core/error.h"
#include "core/files.h"
#include "core/text.h"
#include "io/ledger_intake.h"
#include "io/ofx.h"
#include "io/sha256.h"
#include "store/ledger_store.h"

namespace keel::io {

LedgerImportSummary import_ofx_transactions(store::Database& db, const std::filesystem::path& file,
                                            const ImportOptions& options) {
  if (options.mapping)
    throw InputError("--map: an OFX statement describes itself; a mapping is for CSV files");
  const OfxStatement st = read_ofx(file);
  if (!options.account)
    throw InputError(
        fmt::format("--account: the statement is for '{}'; name the keel account it "
                    "belongs to",
                    printable(st.account)));
  LedgerImportSummary sum;
  sum.file = input_name(file);
  sum.dry_run = options.dry_run;
  sum.sha256 = sha256_file_hex(file);
  store::WriteTransaction tx(db);
  const Account account = store::account_named(db, *options.account);
  if (!st.currency.empty() && st.currency != account.currency)
    throw InputError(fmt::format(
        "{}: the statement is in {} but account '{}' keeps {}; keel does "
        "not convert currencies yet",
        printable(sum.file), printable(st.currency), printable(account.name), account.currency));
  ErrorList errors(input_name(file));
  std::vector<IntakeRow> rows;
  for (const auto& t : st.transactions) {
    ++sum.rows;
    if (t.skipped) {
      auto it = std::find_if(sum.skipped.begin(), sum.skipped.end(),
                             [&](const auto& p) { return p.first == t.element; });
      if (it == sum.skipped.end())
        sum.skipped.emplace_back(t.element, 1);
      else
        ++it->second;
      continue;
    }
    const std::string where = fmt::format("element <{}> (FITID {})", t.element, printable(t.fitid));
    if (!t.refused.empty()) {
      errors.add(t.line, "", fmt::format("{}: {}", where, t.refused));
      continue;
    }
    if (!t.currency.empty() && t.currency != account.currency) {
      errors.add(
          t.line, "",
          fmt::format("{}: in {}, but account '{}' keeps {}; keel does not convert "
                      "currencies yet",
                      where, printable(t.currency), printable(account.name), account.currency));
      continue;
    }
    IntakeRow row;
    row.line = t.line;
    ledger::PostRequest& r = row.request;
    r.kind = t.kind;
    r.date = t.date;
    r.account = account.name;
    if (!t.security.empty()) r.symbol = t.security;
    r.quantity = t.quantity;
    r.price = t.price;
    r.amount = t.amount;
    r.fee = t.fee;
    r.ref = t.fitid;
    if (!t.note.empty()) r.note = t.note;
    auto source = [&](const char* field, const char* element, const std::optional<Decimal>& v) {
      if (v) row.sources[field] = {element, v->str()};
    };
    source("quantity", "UNITS", t.quantity);
    source("price", "UNITPRICE", t.price);
    source("amount", "TOTAL", t.amount);
    source("fee", "COMMISSION", t.fee);
    if (r.symbol) row.sources["symbol"] = {"SECID", *r.symbol};
    row.sources["ref"] = {"FITID", t.fitid};
    if (t.withheld) {
      IntakeRow tax;
      tax.line = t.line;
      tax.request.kind = TxnKind::tax;
      tax.request.date = t.date;
      tax.request.account = account.name;
      tax.request.symbol = r.symbol;
      tax.request.amount = t.withheld;
      tax.request.ref = t.fitid + ":withholding";
      tax.sources["amount"] = {"WITHHOLDING", t.withheld->str()};
      rows.push_back(std::move(row));
      rows.push_back(std::move(tax));
      continue;
    }
    rows.push_back(std::move(row));
  }
  if (!errors.empty()) errors.raise("nothing was changed");
  book_rows(db, file, std::move(rows), options, errors, sum);
  if (options.dry_run) return sum;
  tx.commit();
  return sum;
}

}  // namespace keel::io
