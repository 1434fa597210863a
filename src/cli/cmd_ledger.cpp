// Commands that write the ledger: init, account add and tax-status, security add, record,
// void.
#include <fmt/format.h>

#include <memory>
#include <set>

#include "cli/context.h"
#include "cli/history_rows.h"
#include "cli/options.h"
#include "core/currency.h"
#include "core/error.h"
#include "core/text.h"
#include "ledger/accounts.h"
#include "ledger/action_posting.h"
#include "ledger/plausibility.h"
#include "ledger/posting.h"
#include "ledger/tax.h"
#include "store/ledger_store.h"

namespace keel::cli {
namespace {

void add_init(CLI::App& app, Context& ctx) {
  auto currency = std::make_shared<std::string>();
  auto* cmd = app.add_subcommand("init", "Create an empty ledger (or bring an old one up to date)");
  add_examples(*cmd, {"keel init --currency EUR", "keel init --db household.db --currency EUR"});
  cmd->add_option("--currency", *currency,
                  "The ledger's own currency, a three-letter code: accounts and securities added "
                  "without --currency take it (default: the first account's currency)");
  cmd->callback([&ctx, currency] {
    const auto code = currency->empty() ? std::string() : normalize_currency(*currency);
    auto db = ctx.open_ledger(store::Access::create);
    if (!code.empty()) {
      store::WriteTransaction tx(db);
      try {
        store::set_ledger_currency(db, code);
      } catch (const InputError& e) {
        throw InputError(fmt::format("--currency: {}", e.what()));
      }
      tx.commit();
    }
    const auto ledger_currency = store::ledger_currency(db);
    out(fmt::format("ledger ready at {} (schema version {}, {})\n", printable(db.path().string()),
                    db.schema_version(),
                    ledger_currency ? "currency " + *ledger_currency
                                    : std::string("currency: the first account's")));
  });
}

struct AccountAddOptions {
  std::string name, currency, basis = "fifo", tax_status = "taxable";
  bool allow_negative = false;
};

TaxStatus tax_status_option(const std::string& text, std::string_view option) {
  try {
    return parse_tax_status(text);
  } catch (const InputError& e) {
    throw InputError(fmt::format("{}: {}", option, e.what()));
  }
}

void add_account_add(CLI::App& group, Context& ctx) {
  auto o = std::make_shared<AccountAddOptions>();
  auto* cmd = group.add_subcommand("add", "Add an account");
  add_examples(*cmd, {"keel account add Taxable --currency EUR --basis fifo",
                      "keel account add Margin --allow-negative-cash"});
  cmd->add_option("NAME", o->name, "Account name")->required();
  cmd->add_option("--currency", o->currency,
                  "Three-letter currency code (default: the ledger's; the first account's "
                  "becomes the ledger's)");
  cmd->add_option("--basis", o->basis, "Cost-basis method: fifo, lifo, hifo, average, specific");
  cmd->add_flag("--allow-negative-cash", o->allow_negative, "Let cash go below zero (margin)");
  cmd->add_option("--tax-status", o->tax_status,
                  "taxable, tax-deferred or tax-exempt, from the account's opening (change it "
                  "later with 'keel account tax-status')");
  cmd->callback([&ctx, o] {
    const TaxStatus status = tax_status_option(o->tax_status, "--tax-status");
    Account a;
    a.name = o->name;
    if (!o->currency.empty()) a.currency = normalize_currency(o->currency);
    a.basis = parse_basis_method(o->basis);
    a.allow_negative_cash = o->allow_negative;
    auto db = ctx.open_ledger(store::Access::write);
    store::WriteTransaction tx(db);
    const auto id = ledger::add_account(db, a, status);
    a = *store::find_account(db, a.name);
    tx.commit();
    out(fmt::format("account {} '{}' added ({}, {}{}{})\n", id, printable(a.name), a.currency,
                    to_string(a.basis), a.allow_negative_cash ? ", negative cash allowed" : "",
                    status == TaxStatus::taxable ? "" : fmt::format(", {}", to_string(status))));
  });
}

struct TaxStatusOptions {
  std::string name, status, from;
};

void add_account_tax_status(CLI::App& group, Context& ctx) {
  auto o = std::make_shared<TaxStatusOptions>();
  auto* cmd = group.add_subcommand(
      "tax-status", "Change an account's tax status from a day on (the history is kept)");
  add_examples(*cmd, {"keel account tax-status Retirement tax-deferred --from 2026-01-01"});
  cmd->add_option("NAME", o->name, "Account name")->required();
  cmd->add_option("STATUS", o->status, "taxable, tax-deferred or tax-exempt")->required();
  cmd->add_option("--from", o->from, "First day of the new status (YYYY-MM-DD)")->required();
  cmd->callback([&ctx, o] {
    const TaxStatus status = tax_status_option(o->status, "STATUS");
    const auto from = date_option(o->from, "--from");
    if (!from) throw InputError("--from: give the first day of the new status (YYYY-MM-DD)");
    auto db = ctx.open_ledger(store::Access::write);
    store::WriteTransaction tx(db);
    ledger::set_tax_status(db, o->name, status, *from);
    tx.commit();
    out(fmt::format("account '{}' is {} from {}\n", printable(o->name), to_string(status),
                    from->str()));
  });
}

struct SecurityAddOptions {
  std::string symbol, name, kind, currency, lot_size = "1", sector, country;
};

void add_security_add(CLI::App& group, Context& ctx) {
  auto o = std::make_shared<SecurityAddOptions>();
  auto* cmd = group.add_subcommand("add", "Add a security");
  add_examples(
      *cmd, {"keel security add KESTR --name \"Kestrel Looms\" --kind stock --currency EUR "
             "--sector textiles",
             "keel security add ZXTR --name \"Zenith Total Return\" --kind index --currency EUR"});
  cmd->add_option("SYMBOL", o->symbol, "Symbol, unique in the ledger")->required();
  cmd->add_option("--name", o->name, "Full name")->required();
  cmd->add_option("--kind", o->kind, "stock, fund, bond, index or currency")->required();
  cmd->add_option("--currency", o->currency, "Three-letter currency code (default: the ledger's)");
  cmd->add_option("--lot-size", o->lot_size, "Smallest tradable multiple (1 = whole units)");
  cmd->add_option("--sector", o->sector, "Sector label, for rule universes");
  cmd->add_option("--country", o->country,
                  "Issuer's country, ISO 3166-1 alpha-2 (such as NL), for withholding by country");
  cmd->callback([&ctx, o] {
    Security s;
    s.symbol = o->symbol;
    s.name = o->name;
    s.kind = parse_security_kind(o->kind);
    if (!o->currency.empty()) s.currency = normalize_currency(o->currency);
    try {
      s.lot_size = Decimal::parse(o->lot_size);
    } catch (const InputError& e) {
      throw InputError(fmt::format("--lot-size: {}", e.what()));
    }
    if (!o->sector.empty()) s.sector = o->sector;
    if (!o->country.empty()) {
      try {
        s.country = normalize_country(o->country);
      } catch (const InputError& e) {
        throw InputError(fmt::format("--country: {}", e.what()));
      }
    }
    auto db = ctx.open_ledger(store::Access::write);
    store::WriteTransaction tx(db);
    const auto id = ledger::add_security(db, s);
    tx.commit();
    out(fmt::format("security {} '{}' added ({})\n", id, printable(s.symbol), to_string(s.kind)));
  });
}

// Raw text of every record flag; parsed only after CLI11 is done, so each
// error names the flag.
struct RecordOptions {
  std::string date, account, symbol, quantity, price, fee, amount, ratio, lots, to_account,
      acquired, ref, note, currency, rate, to_currency;
  bool allow_future = false;
};

void add_allow_future_flag(CLI::App& cmd, bool& allow) {
  cmd.add_flag(ledger::kAllowFutureFlag, allow,
               "Accept a --date after today, e.g. a trade booked before it settles (without it "
               "such a date is refused as a likely slip)");
}

ledger::PostRequest to_request(TxnKind kind, const RecordOptions& o) {
  ledger::PostRequest r;
  r.kind = kind;
  r.date = date_option_or_today(o.date, "--date");
  r.account = o.account;
  r.symbol = text_option(o.symbol);
  r.quantity = decimal_option(o.quantity, "--quantity");
  r.price = decimal_option(o.price, "--price");
  r.fee = decimal_option(o.fee, "--fee");
  r.amount = decimal_option(o.amount, "--amount");
  r.acquired = date_option(o.acquired, "--acquired");
  if (!o.lots.empty()) r.lots = parse_lot_picks(o.lots);
  r.to_account = text_option(o.to_account);
  r.ref = text_option(o.ref);
  r.note = text_option(o.note);
  r.allow_future = o.allow_future;
  if (!o.currency.empty()) r.currency = parse_currency(o.currency, "--currency");
  if (!o.to_currency.empty()) r.to_currency = parse_currency(o.to_currency, "--to-currency");
  r.rate = decimal_option(o.rate, "--rate");
  return r;
}

struct KindSpec {
  TxnKind kind;
  const char* help;
  const char* example;
  bool units;     // --symbol --quantity
  bool trade;     // --price --fee
  bool cash;      // --amount
  bool security;  // --symbol for cash kinds
};

constexpr KindSpec kKindSpecs[] = {
    {TxnKind::deposit, "Cash paid into the account from outside",
     "keel record deposit --date 2025-01-02 --account Taxable --amount 10000", false, false, true,
     false},
    {TxnKind::withdrawal, "Cash taken out of the account",
     "keel record withdrawal --date 2025-06-30 --account Taxable --amount 2500", false, false, true,
     false},
    {TxnKind::buy, "Buy units: opens a lot whose cost includes the fee",
     "keel record buy --date 2025-01-06 --account Taxable --symbol KESTR --quantity 100 --price 50 "
     "--fee 10",
     true, true, false, false},
    {TxnKind::sell, "Sell units: closes lots by the account's method (or --lots)",
     "keel record sell --date 2025-09-15 --account Taxable --symbol KESTR --quantity 40 --price "
     "61.20 --fee 10",
     true, true, false, false},
    {TxnKind::dividend, "Cash dividend received (gross, before withholding)",
     "keel record dividend --date 2025-04-15 --account Taxable --symbol KESTR --amount 120", false,
     false, true, true},
    {TxnKind::interest, "Interest received",
     "keel record interest --date 2025-03-31 --account Taxable --amount 4.17", false, false, true,
     true},
    {TxnKind::tax, "Tax withheld (e.g. on a dividend)",
     "keel record tax --date 2025-04-15 --account Taxable --symbol KESTR --amount 18", false, false,
     true, true},
    {TxnKind::fee, "A fee charged to the account",
     "keel record fee --date 2025-12-31 --account Taxable --amount 25 --note \"custody fee\"",
     false, false, true, true},
    {TxnKind::transfer_in, "Cash or units brought in from outside",
     "keel record transfer_in --date 2025-02-03 --account Taxable --symbol KESTR --quantity 50 "
     "--price 42 --acquired 2021-05-10",
     true, true, true, false},
    {TxnKind::transfer_out,
     "Cash or units moved out; with --to-account, into another account of this ledger",
     "keel record transfer_out --date 2025-03-02 --account Taxable --amount 8000 --to-account "
     "Retirement",
     true, true, true, false},
    {TxnKind::exchange, "Cash of one currency exchanged for another inside the account",
     "keel record exchange --date 2025-01-03 --account Taxable --amount 5000 --to-currency USD "
     "--rate 1.0412 --fee 2.50",
     false, false, true, false},
};

void add_record_kind(CLI::App& group, Context& ctx, const KindSpec& spec) {
  auto o = std::make_shared<RecordOptions>();
  auto* cmd = group.add_subcommand(std::string(to_string(spec.kind)), spec.help);
  add_examples(*cmd, {spec.example});
  cmd->add_option("--date", o->date, "Day of the transaction, YYYY-MM-DD (default: today)");
  cmd->add_option("--account", o->account, "Account name")->required();
  if (spec.units || spec.security)
    cmd->add_option("--symbol", o->symbol,
                    spec.units ? "Security symbol" : "Security the cash relates to (optional)");
  if (spec.units) cmd->add_option("--quantity", o->quantity, "Number of units (positive)");
  if (spec.trade) {
    cmd->add_option(
        "--price", o->price,
        spec.kind == TxnKind::transfer_in ? "Unit cost of units brought in" : "Price per unit");
    cmd->add_option("--fee", o->fee, "Fee or commission (default 0)");
  }
  if (spec.cash)
    cmd->add_option("--amount", o->amount,
                    spec.kind == TxnKind::exchange ? "Amount sold, in --currency (positive)"
                                                   : "Cash amount (positive)");
  cmd->add_option("--currency", o->currency,
                  spec.kind == TxnKind::exchange
                      ? "Currency sold (default: the account's)"
                      : "ISO 4217 currency of the figures (default: the security's, else the "
                        "account's)");
  if (spec.kind == TxnKind::exchange) {
    cmd->add_option("--to-currency", o->to_currency, "Currency bought")->required();
    cmd->add_option("--rate", o->rate, "Units of --to-currency one unit of --currency bought");
    cmd->add_option("--fee", o->fee, "Fee, in --currency, on top of --amount (default 0)");
  } else if (spec.kind == TxnKind::buy || spec.kind == TxnKind::sell ||
             spec.kind == TxnKind::dividend || spec.kind == TxnKind::interest ||
             spec.kind == TxnKind::tax) {
    cmd->add_option("--rate", o->rate,
                    "Settle in the account's currency at this rate: units of --currency one unit "
                    "of the account's currency bought (the broker's rate)");
  }
  if (spec.kind == TxnKind::sell || spec.kind == TxnKind::transfer_out)
    cmd->add_option("--lots", o->lots, "Specific lots to take: LOT:QUANTITY[,LOT:QUANTITY...]");
  if (spec.kind == TxnKind::transfer_out)
    cmd->add_option("--to-account", o->to_account,
                    "Receiving account of this ledger (books a linked pair)");
  if (spec.kind == TxnKind::transfer_in)
    cmd->add_option("--acquired", o->acquired,
                    "Start of the holding period of units brought in (default: --date)");
  cmd->add_option("--ref", o->ref, "External reference, unique per account");
  cmd->add_option("--note", o->note, "Free text");
  add_allow_future_flag(*cmd, o->allow_future);
  const TxnKind kind = spec.kind;
  cmd->callback([&ctx, o, kind] {
    const auto request = to_request(kind, *o);
    auto db = ctx.open_ledger(store::Access::write);
    const auto ids = ledger::post(db, request);
    std::string id_text = std::to_string(ids.front());
    if (ids.size() > 1) id_text += fmt::format(" and {}", ids.back());
    std::string text = fmt::format("posted {}: {} on {} in '{}'\n", id_text, to_string(kind),
                                   request.date.str(), printable(request.account));
    // Posted, but worth a second look: said here and by 'keel verify'.
    for (const auto& flag : ledger::plausibility_flags(
             db, ledger::load_log(db), std::set<std::int64_t>(ids.begin(), ids.end())))
      text += fmt::format("warning: {}; if it is right: keel confirm {} --reason ...\n",
                          flag.message, flag.txn_id);
    out(text);
  });
}

void add_record_split(CLI::App& group, Context& ctx) {
  auto o = std::make_shared<RecordOptions>();
  auto* cmd = group.add_subcommand(
      "split", "A split of a security, applied to every account's lots at the start of its day");
  add_examples(
      *cmd, {"keel record split --date 2025-06-02 --symbol KESTR --ratio 2",
             "keel record split --date 2025-06-02 --symbol KESTR --ratio 0.1 --cash-in-lieu 41.5"});
  cmd->add_option("--date", o->date, "Day the split takes effect, YYYY-MM-DD")->required();
  cmd->add_option("--symbol", o->symbol, "Security symbol")->required();
  cmd->add_option("--ratio", o->ratio, "New units per old unit: 2 = two-for-one, 0.1 = one-for-ten")
      ->required();
  cmd->add_option("--cash-in-lieu", o->price,
                  "Pay the fraction of a unit each account is left with in cash, at this price "
                  "per unit (recorded as a corporate action, see 'keel action list')");
  add_allow_future_flag(*cmd, o->allow_future);
  cmd->callback([&ctx, o, cmd] {
    const Date date = date_option_or_today(o->date, "--date");
    const auto ratio = decimal_option(o->ratio, "--ratio");
    // CLI11's required() accepts an empty value ('--ratio ""').
    if (!ratio) throw InputError("split: --ratio needs a number, such as 2 for two-for-one");
    if (cmd->count("--cash-in-lieu") > 0) {
      ledger::ActionRequest r;
      r.kind = ActionKind::split;
      r.date = date;
      r.symbol = o->symbol;
      r.ratio = ratio;
      r.cash_in_lieu = true;
      r.in_lieu_price = decimal_option(o->price, "--cash-in-lieu");
      r.allow_future = o->allow_future;
      auto db = ctx.open_ledger(store::Access::write);
      const auto posted = ledger::post_action(db, r);
      out(fmt::format("action {} posted: split of {} x{} on {}, fractions paid at {}\n", posted.id,
                      printable(o->symbol), ratio->str(), date.str(), r.in_lieu_price->str()));
      return;
    }
    auto db = ctx.open_ledger(store::Access::write);
    const auto id = ledger::post_split(db, o->symbol, date, *ratio, o->allow_future);
    out(fmt::format("split {} posted: {} x{} on {}\n", id, printable(o->symbol), ratio->str(),
                    date.str()));
  });
}

struct VoidOptions {
  std::int64_t id = 0;
  std::string reason;
};

void add_void(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<VoidOptions>();
  auto* cmd = app.add_subcommand(
      "void", "Cancel a posted transaction by recording a reversal (nothing is ever deleted)");
  add_examples(*cmd, {"keel void 7 --reason \"entered twice\""});
  cmd->add_option("ID", o->id, "Transaction id (see 'keel history')")->required();
  cmd->add_option("--reason", o->reason, "Why it is cancelled")->required();
  cmd->callback([&ctx, o] {
    auto db = ctx.open_ledger(store::Access::write);
    const auto result = ledger::void_transaction(db, o->id, o->reason);
    const bool reinstating = result.cancelled.empty();
    const auto& shown = reinstating ? result.reinstated : result.cancelled;
    const bool one = shown.size() == 1;
    auto ids = [](const std::vector<std::int64_t>& list) {
      std::string text;
      for (std::size_t i = 0; i < list.size(); ++i)
        text += (i == 0 ? "" : i + 1 == list.size() ? " and " : ", ") + std::to_string(list[i]);
      return text;
    };
    std::string text = fmt::format("void entr{} {} recorded; ",
                                   result.void_ids.size() == 1 ? "y" : "ies", ids(result.void_ids));
    text += reinstating ? fmt::format("{} back in the books:\n", one ? "this is" : "these are")
                        : fmt::format("{} now out of the books:\n", one ? "this is" : "these are");
    const auto names = LedgerNames::load(db);
    const auto voided = voided_ids(store::list_transactions(db));
    auto table = history_table();
    for (const auto& t : shown) table.add_row(history_cells(t, names, voided));
    text += table.render(ctx.style());
    const char* it = one ? "it" : "them";
    text += reinstating
                ? fmt::format("To take {} out again, void {}.\n", it, result.void_ids.front())
                : fmt::format("To put {} back, void {}.\n", it, result.void_ids.front());
    out(text);
  });
}

void add_confirm(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<VoidOptions>();
  auto* cmd = app.add_subcommand(
      "confirm",
      "Mark a transaction a plausibility check flags as right, so it is flagged no more");
  add_examples(*cmd, {"keel confirm 12 --reason \"bought in the closing auction\""});
  cmd->add_option("ID", o->id, "Transaction id (see 'keel verify')")->required();
  cmd->add_option("--reason", o->reason, "Why it is right")->required();
  cmd->callback([&ctx, o] {
    auto db = ctx.open_ledger(store::Access::write);
    ledger::confirm(db, o->id, o->reason);
    out(fmt::format("transaction {} confirmed; it is flagged no more\n", o->id));
  });
}

}  // namespace

void register_ledger_commands(CLI::App& app, Context& ctx) {
  add_init(app, ctx);
  auto* accounts = app.add_subcommand("account", "Add, list or rename accounts");
  accounts->require_subcommand(1);
  add_account_add(*accounts, ctx);
  add_account_tax_status(*accounts, ctx);
  auto* securities = app.add_subcommand("security", "Add, list or change securities");
  securities->require_subcommand(1);
  add_security_add(*securities, ctx);
  auto* record = app.add_subcommand("record", "Post a transaction, a split or a corporate action");
  record->require_subcommand(1);
  for (const auto& spec : kKindSpecs) add_record_kind(*record, ctx, spec);
  add_record_split(*record, ctx);
  add_void(app, ctx);
  add_confirm(app, ctx);
  // After their subcommands, which would inherit these footers.
  add_examples(*accounts, {"keel account add Taxable --currency EUR", "keel account list"});
  add_examples(*securities,
               {"keel security add KESTR --name \"Kestrel Looms\" --kind stock --currency EUR",
                "keel security list"});
  add_examples(*record,
               {"keel record deposit --date 2025-01-02 --account Taxable --amount 10000",
                "keel record buy --date 2025-01-06 --account Taxable --symbol KESTR --quantity 100 "
                "--price 50"});
}

}  // namespace keel::cli
