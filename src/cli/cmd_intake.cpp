// Commands that move market data in and out: import, export, imports.
#include <fmt/format.h>
#include <unistd.h>

#include <chrono>
#include <cstdio>
#include <memory>

#include "cli/context.h"
#include "cli/csv_rows.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/files.h"
#include "core/json.h"
#include "core/text.h"
#include "io/errors.h"
#include "io/ledger_intake.h"
#include "io/market_intake.h"
#include "ledger/action_posting.h"
#include "ledger/posting.h"
#include "report/json_schema.h"
#include "report/table.h"
#include "store/market_data.h"

namespace keel::cli {
namespace {

// Rows per second on stderr, redrawn in place; only on a terminal and only
// once the file has passed 100,000 rows.
class RowProgress {
 public:
  explicit RowProgress(bool enabled) : enabled_(enabled && ::isatty(STDERR_FILENO)) {}
  void update(std::uint64_t rows, std::uint64_t bytes, std::uint64_t total) {
    if (!enabled_ || rows < 100000) return;
    shown_ = true;
    const double secs = std::chrono::duration<double>(Clock::now() - start_).count();
    const double rate = secs > 0 ? static_cast<double>(rows) / secs : 0.0;
    const double pct = total ? 100.0 * static_cast<double>(bytes) / static_cast<double>(total) : 0;
    std::fputs(fmt::format("\r{:>11} rows  {:>9.0f} rows/s  {:5.1f}%", rows, rate, pct).c_str(),
               stderr);
  }
  ~RowProgress() {
    if (shown_) std::fputs("\n", stderr);
  }

 private:
  using Clock = std::chrono::steady_clock;
  bool enabled_;
  bool shown_ = false;
  Clock::time_point start_ = Clock::now();
};

struct ImportCommandOptions {
  std::string what, file, mapping, account;
  bool dry_run = false, replace = false, quiet = false, allow_future = false,
       book_corrections = false, market_only = false;
};

// The first rows of a dry run, as keel would book them.
std::string preview_table(const io::LedgerImportSummary& sum, const report::Style& style) {
  report::Table table({{"line", report::Align::right},
                       {"date"},
                       {"account", report::Align::left, true},
                       {"kind"},
                       {"symbol"},
                       {"quantity", report::Align::right},
                       {"price", report::Align::right},
                       {"amount", report::Align::right},
                       {"fee", report::Align::right, false, 1},
                       {"ref", report::Align::left, false, 2}});
  auto opt = [](const std::optional<Decimal>& d) { return d ? d->str() : std::string(); };
  for (const auto& row : sum.preview) {
    const auto& r = row.request;
    table.add_row({std::to_string(row.line), r.date.str(), r.account,
                   std::string(to_string(r.kind)), r.symbol.value_or(""), opt(r.quantity),
                   opt(r.price), opt(r.amount), r.fee && !r.fee->is_zero() ? r.fee->str() : "",
                   r.ref.value_or("")});
  }
  std::string text = table.render(style);
  if (sum.added + sum.corrected > sum.preview.size())
    text += fmt::format("... and {} more\n", sum.added + sum.corrected - sum.preview.size());
  return text;
}

std::string ledger_summary(const io::LedgerImportSummary& sum, const report::Style& style) {
  std::string text =
      fmt::format("{}: {} rows read; {} {}, {} already booked", printable(sum.file), sum.rows,
                  sum.dry_run ? "would add" : "added", sum.added, sum.already_booked);
  if (sum.corrected)
    text += fmt::format(", {} {}", sum.dry_run ? "would correct" : "corrected", sum.corrected);
  if (!sum.skipped.empty()) {
    std::uint64_t total = 0;
    std::string per;
    for (const auto& [action, n] : sum.skipped) {
      total += n;
      per += fmt::format("{}{} {}", per.empty() ? "" : ", ", printable(action), n);
    }
    text += fmt::format("; skipped {} ({})", total, per);
  }
  if (sum.dry_run) text += " (dry run: nothing was changed)";
  text += "\n";
  for (const auto& note : sum.notes) text += "note: " + note + "\n";
  if (sum.dry_run && !sum.preview.empty()) text += "\n" + preview_table(sum, style);
  return text;
}

void add_import(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<ImportCommandOptions>();
  auto* cmd = app.add_subcommand("import", "Read a CSV file into the ledger, all or nothing");
  add_examples(*cmd, {"keel import fx rates.csv",
                      "keel import transactions broker.csv --map broker.toml --dry-run"});
  cmd->add_option("WHAT", o->what,
                  "accounts, transactions, actions (corporate actions), securities, prices, "
                  "metrics, distributions, splits or fx (exchange rates)")
      ->required();
  cmd->add_option("FILE", o->file,
                  "CSV file (keel's layout, or another described by --map); transactions also "
                  "from an OFX investment statement ('-': standard input)")
      ->required();
  cmd->add_option("--map", o->mapping,
                  "TOML file describing the file's layout ('-': standard input)");
  cmd->add_flag("--dry-run", o->dry_run, "Check everything and report, but change nothing");
  cmd->add_flag("--replace", o->replace, "Overwrite stored values that differ from the file");
  cmd->add_flag("--quiet", o->quiet, "No progress display");
  cmd->add_flag(ledger::kAllowFutureFlag, o->allow_future,
                "Accept transactions and splits dated after today, e.g. trades booked before "
                "they settle (without it such rows are refused as likely slips)");
  cmd->add_flag("--book-corrections", o->book_corrections,
                "Transactions: book a booked ref whose content changed as a void of the old row "
                "plus the new row (refused otherwise)");
  cmd->add_option("--account", o->account,
                  "Transactions from an OFX statement: the keel account it belongs to");
  cmd->add_flag(ledger::kMarketOnlyFlag, o->market_only,
                "Actions: no account holds the securities; record the actions as market data "
                "for back-tests and signal checks");
  cmd->callback([&ctx, o] {
    if (is_standard_input(o->file) && is_standard_input(o->mapping))
      throw InputError(
          "--map -: the file is read from standard input already; give the mapping "
          "as a file");
    io::ImportOptions options;
    if (!o->mapping.empty()) options.mapping = io::Mapping::load(o->mapping);
    options.dry_run = o->dry_run;
    options.replace = o->replace;
    options.allow_future = o->allow_future;
    options.book_corrections = o->book_corrections;
    if (!o->account.empty()) options.account = o->account;
    options.market_only = o->market_only;
    if (o->what != "actions" && o->market_only)
      throw InputError(fmt::format("{}: only for importing actions", ledger::kMarketOnlyFlag));
    if (o->what != "transactions" && (o->book_corrections || options.account))
      throw InputError(fmt::format("{}: only for importing transactions",
                                   o->book_corrections ? "--book-corrections" : "--account"));
    if (o->what == "transactions" || o->what == "accounts" || o->what == "actions") {
      auto db = ctx.open_ledger(store::Access::write);
      const auto sum = printing_refusals([&] {
        if (o->what == "actions") return io::import_actions(db, o->file, options);
        return o->what == "accounts" ? io::import_accounts(db, o->file, options)
                                     : io::import_transactions(db, o->file, options);
      });
      out(ledger_summary(sum, ctx.style()));
      return;
    }
    const io::MarketKind kind = io::parse_market_kind(o->what);
    auto db = ctx.open_ledger(store::Access::write);
    io::ImportSummary sum;
    {
      RowProgress progress(!o->quiet);
      options.progress = [&](std::uint64_t r, std::uint64_t b, std::uint64_t t) {
        progress.update(r, b, t);
      };
      sum = printing_refusals([&] { return io::import_market(db, kind, o->file, options); });
    }
    const std::string verb = sum.dry_run ? "would add" : "added";
    std::string text = fmt::format("{}: {} rows read; {} {}, {} unchanged", printable(sum.file),
                                   sum.rows, verb, sum.added, sum.unchanged);
    if (sum.replaced)
      text += fmt::format(", {} {}", sum.dry_run ? "would replace" : "replaced", sum.replaced);
    if (sum.dry_run) text += " (dry run: nothing was changed)";
    text += "\n";
    if (sum.same_file_before)
      text += fmt::format("note: the same file was imported as {} on {} (run {})\n",
                          printable(sum.same_file_before->file_name),
                          sum.same_file_before->imported_at, sum.same_file_before->id);
    for (const auto& note : sum.notes) text += "note: " + note + "\n";
    out(text);
  });
}

struct ExportCommandOptions {
  std::string what, file;
  bool csv = false, json = false;
};

void add_export(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<ExportCommandOptions>();
  auto* cmd = app.add_subcommand("export", "Write ledger or market data as CSV or JSON");
  add_examples(*cmd,
               {"keel export transactions --out transactions.csv", "keel export prices --json"});
  cmd->add_option("WHAT", o->what,
                  "accounts, transactions, actions (corporate actions), securities, prices, "
                  "metrics, distributions, splits or "
                  "fx (exchange rates)")
      ->required();
  auto* c = cmd->add_flag("--csv", o->csv, "CSV in keel's import layout (the default)");
  cmd->add_flag("--json", o->json, "A JSON array of objects; numbers as exact strings")
      ->excludes(c);
  cmd->add_option("--out", o->file,
                  "Write to this file instead of standard output ('-': standard output)");
  cmd->callback([&ctx, o] {
    const std::string& what = o->what;
    const std::string& file = o->file;
    const bool ledger_data = what == "transactions" || what == "accounts" || what == "actions";
    const std::string kind_name =
        ledger_data ? what : std::string(to_string(io::parse_market_kind(what)));
    auto db = ctx.open_ledger();
    OutputFile f(file.empty() ? "-" : file, {"--out"});
    const auto format = o->json ? io::ExportFormat::json : io::ExportFormat::csv;
    std::uint64_t rows = 0;
    if (what == "transactions")
      rows = io::export_transactions(db, format, f);
    else if (what == "accounts")
      rows = io::export_accounts(db, format, f);
    else if (what == "actions")
      rows = io::export_actions(db, format, f);
    else
      rows = io::export_market(db, io::parse_market_kind(what), format, f);
    f.commit();
    if (!f.to_stdout())
      std::fputs(
          fmt::format("{} {} rows written to {}\n", rows, kind_name, printable(file)).c_str(),
          stderr);
  });
}

void add_imports(CLI::App& app, Context& ctx) {
  struct Forms {
    bool json = false, csv = false;
  };
  auto o = std::make_shared<Forms>();
  auto* cmd = app.add_subcommand("imports", "List the imports that changed the ledger");
  add_examples(*cmd, {"keel imports", "keel imports --csv"});
  add_json_and_csv_flags(*cmd, o->json, o->csv);
  cmd->callback([&ctx, o] {
    auto db = ctx.open_ledger();
    const auto runs = store::list_import_runs(db);
    if (o->json) {
      std::string text;
      JsonWriter j(text);
      report::begin_document(j, "imports", 1).key("imports").begin_array();
      for (const auto& r : runs) {
        j.begin_object().member("run", static_cast<long long>(r.id));
        j.member("imported_at", r.imported_at).member("what", r.what);
        j.member("rows_read", static_cast<long long>(r.rows_read));
        j.member("rows_added", static_cast<long long>(r.rows_added));
        j.member("file_sha256", r.file_sha256).member("file", r.file_name).end_object();
      }
      j.end_array().end_object();
      out(text + "\n");
      return;
    }
    if (o->csv) {
      CsvRows csv({"run", "imported_at", "what", "rows_read", "rows_added", "file_sha256", "file"});
      for (const auto& r : runs)
        csv.add({std::to_string(r.id), r.imported_at, r.what, std::to_string(r.rows_read),
                 std::to_string(r.rows_added), r.file_sha256, r.file_name});
      out(csv.text());
      return;
    }
    if (runs.empty()) {
      out("no imports yet\n");
      return;
    }
    // The file name shortens to fit a terminal; the digest (its first 16
    // digits) makes way before it.
    report::Table t({{"run", report::Align::right},
                     {"imported at"},
                     {"what"},
                     {"rows read", report::Align::right},
                     {"rows added", report::Align::right},
                     {"sha256", report::Align::left, false, 1},
                     {"file", report::Align::left, true}});
    for (const auto& r : runs)
      t.add_row({std::to_string(r.id), r.imported_at, r.what, std::to_string(r.rows_read),
                 std::to_string(r.rows_added), r.file_sha256.substr(0, 16), r.file_name});
    out(t.render(ctx.style()));
  });
}

}  // namespace

void register_intake_commands(CLI::App& app, Context& ctx) {
  add_import(app, ctx);
  add_export(app, ctx);
  add_imports(app, ctx);
}

}  // namespace keel::cli
