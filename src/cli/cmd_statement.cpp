// keel statement: the year-end statement of one account or the whole ledger,
// on the terminal, as JSON, or written as HTML, PDF, XLSX and CSV files.
#include <fmt/format.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <memory>

#include "cli/context.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/text.h"
#include "report/statement.h"
#include "report/statement_forms.h"

namespace keel::cli {
namespace {

namespace fs = std::filesystem;

struct StatementOptions {
  std::string year, account, benchmark, long_term_days, html, pdf, xlsx, csv;
  bool json = false;
};

// Refuses an output path whose folder does not exist, before anything is written.
void check_target(const std::string& path, const char* option, bool is_dir) {
  if (path.empty()) return;
  const fs::path p(path);
  const fs::path parent = p.has_parent_path() ? p.parent_path() : fs::path(".");
  std::error_code ec;
  if (!fs::is_directory(parent, ec))
    throw InputError(fmt::format("{} {}: the folder '{}' does not exist", option, printable(path),
                                 printable(parent.string())));
  if (!is_dir && fs::is_directory(p, ec))
    throw InputError(fmt::format("{} {}: is a folder, not a file", option, printable(path)));
  if (is_dir && fs::exists(p, ec) && !fs::is_directory(p, ec))
    throw InputError(fmt::format("{} {}: exists and is not a folder", option, printable(path)));
}

template <typename F>
void with_option(const char* option, F&& write) {
  try {
    write();
  } catch (const InputError& e) {
    throw InputError(fmt::format("{}: {}", option, e.what()));
  }
}

void add_statement(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<StatementOptions>();
  auto* cmd = app.add_subcommand(
      "statement",
      "Year-end statement: the year's value changes, performance, holdings, realized gains and "
      "income");
  cmd->add_option("--year", o->year, "Calendar year of the statement")->required();
  add_account_option(*cmd, o->account, "Only this account (default: the whole ledger)");
  cmd->add_option("--benchmark", o->benchmark, "Compare with the closes of this security");
  cmd->add_option("--long-term-days", o->long_term_days,
                  "Holding days beyond which a gain is long-term (default: more than one "
                  "calendar year)");
  cmd->add_option("--html", o->html, "Write the statement as a self-contained HTML file");
  cmd->add_option("--pdf", o->pdf, "Write the statement as PDF (prints the HTML with Chromium)");
  cmd->add_option("--xlsx", o->xlsx, "Write the statement as an XLSX workbook, a sheet a section");
  cmd->add_option("--csv", o->csv, "Write one CSV file per section into this folder");
  add_json_flag(*cmd, o->json);
  cmd->callback([&ctx, o] {
    report::StatementRequest request;
    request.year = whole_number(o->year, "--year", 1, 9999, "a calendar year (1 to 9999)");
    request.account = text_option(o->account);
    request.benchmark = text_option(o->benchmark);
    if (!o->long_term_days.empty())
      request.long_term_days = whole_number(o->long_term_days, "--long-term-days", 1, 100000,
                                            "a number of days (1 or more)");
    check_target(o->html, "--html", false);
    check_target(o->pdf, "--pdf", false);
    check_target(o->xlsx, "--xlsx", false);
    check_target(o->csv, "--csv", true);
    if (!o->pdf.empty() && !report::find_chromium())
      throw InputError(
          "--pdf: no Chromium found on PATH to print the PDF; install it (Debian: apt-get "
          "install chromium) or write --html and print that");

    auto db = ctx.open_ledger();
    const report::Statement s = report::build_statement(db, request);
    if (o->json) {
      out(report::statement_json(s));
    } else if (o->html.empty() && o->pdf.empty() && o->xlsx.empty() && o->csv.empty()) {
      out(report::statement_text(s, ctx.colour()));
    }
    auto wrote = [&](const char* what, const std::string& path) {
      if (!o->json) out(fmt::format("wrote {} {}\n", what, printable(path)));
    };
    if (!o->html.empty() || !o->pdf.empty()) {
      const std::string html = report::statement_html(s);
      if (!o->html.empty()) {
        with_option("--html", [&] { report::write_text_file(o->html, html); });
        wrote("HTML", o->html);
      }
      if (!o->pdf.empty()) {
        with_option("--pdf", [&] {
          std::string dir = (fs::temp_directory_path() / "keel-statement-XXXXXX").string();
          if (!::mkdtemp(dir.data())) throw InputError("cannot make a temporary folder");
          const fs::path page = fs::path(dir) / "statement.html";
          try {
            report::write_text_file(page, html);
            report::print_pdf(page, o->pdf);
          } catch (...) {
            std::error_code ec;
            fs::remove_all(dir, ec);
            throw;
          }
          std::error_code ec;
          fs::remove_all(dir, ec);
        });
        wrote("PDF", o->pdf);
      }
    }
    if (!o->xlsx.empty()) {
      with_option("--xlsx", [&] { report::write_statement_xlsx(s, o->xlsx); });
      wrote("XLSX", o->xlsx);
    }
    if (!o->csv.empty()) {
      with_option("--csv", [&] { report::write_statement_csv(s, o->csv); });
      wrote("CSV files to", o->csv);
    }
  });
}

}  // namespace

void register_statement_commands(CLI::App& app, Context& ctx) {
  add_statement(app, ctx);
}

}  // namespace keel::cli
