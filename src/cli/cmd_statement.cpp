// keel statement: the year-end statement of one account or the whole ledger,
// on the terminal, as JSON, or written as HTML, PDF, XLSX and CSV files.
#include <fmt/format.h>
#include <unistd.h>

#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <memory>
#include <optional>
#include <utility>
#include <vector>

#include "cli/context.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/files.h"
#include "core/memory.h"
#include "core/text.h"
#include "report/statement.h"
#include "report/statement_forms.h"

namespace keel::cli {
namespace {

namespace fs = std::filesystem;

struct StatementOptions {
  std::string year, account, benchmark, long_term_days, html, pdf, xlsx, csv, paper, currency;
  bool json = false;
};

// Refuses a --csv folder that cannot be made, before anything is computed.
// (Files are checked by OutputFile when they are opened.)
void check_folder(const std::string& path, const char* option) {
  if (path.empty()) return;
  if (path == "-")
    throw InputError(fmt::format(
        "{} -: one file a section cannot go to standard output; give a folder", option));
  const fs::path p(path);
  const fs::path parent = p.has_parent_path() ? p.parent_path() : fs::path(".");
  std::error_code ec;
  if (!fs::is_directory(parent, ec))
    throw InputError(fmt::format("{} {}: the folder '{}' does not exist", option, printable(path),
                                 printable(parent.string())));
  if (fs::exists(p, ec) && !fs::is_directory(p, ec))
    throw InputError(fmt::format("{} {}: exists and is not a folder", option, printable(path)));
}

// The file an option names, opened (and so checked) before the statement is
// computed; left empty when the option was not given.
void open_output(std::optional<OutputFile>& file, const std::string& path, const char* option,
                 bool binary) {
  if (!path.empty()) file.emplace(path, OutputOptions{option, true, binary});
}

void add_statement(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<StatementOptions>();
  auto* cmd = app.add_subcommand(
      "statement",
      "Year-end statement: the year's value changes, performance, holdings, realized gains and "
      "income");
  add_examples(
      *cmd,
      {"keel statement --year 2025 --benchmark ZXTR --html statement-2025.html "
       "--pdf statement-2025.pdf",
       "keel statement --year 2025 --account Taxable --xlsx statement-2025.xlsx --paper letter"});
  cmd->add_option("--year", o->year, "Calendar year of the statement")->required();
  add_account_option(*cmd, o->account, "Only this account (default: the whole ledger)");
  cmd->add_option("--benchmark", o->benchmark, "Compare with the closes of this security");
  cmd->add_option("--long-term-days", o->long_term_days,
                  "Holding days beyond which a gain is long-term (default: more than one "
                  "calendar year)");
  cmd->add_option("--html", o->html,
                  "Write the statement as a self-contained HTML file ('-': standard output)");
  cmd->add_option("--pdf", o->pdf,
                  "Write the statement as PDF, printing the HTML with Chromium ('-': standard "
                  "output, not a terminal)");
  cmd->add_option("--xlsx", o->xlsx,
                  "Write the statement as an XLSX workbook, a sheet a section ('-': standard "
                  "output, not a terminal)");
  cmd->add_option("--csv", o->csv, "Write one CSV file per section into this folder");
  cmd->add_option("--paper", o->paper,
                  "Paper of the HTML, PDF and XLSX: a4 or letter (default: the locale's paper "
                  "size, else a4)");
  add_currency_option(*cmd, o->currency);
  add_json_flag(*cmd, o->json);
  cmd->callback([&ctx, o] {
    keep_freed_memory();  // core/memory.h: the report builds and drops large series
    report::StatementRequest request;
    request.year =
        whole_number(o->year, "--year", report::kFirstStatementYear, report::kLastStatementYear,
                     fmt::format("a year a statement covers ({})", report::statement_years()));
    request.account = text_option(o->account);
    request.benchmark = text_option(o->benchmark);
    request.currency = currency_option(o->currency);
    if (!o->long_term_days.empty())
      request.long_term_days = whole_number(o->long_term_days, "--long-term-days", 1, 100000,
                                            "a number of days (1 or more)");
    const report::Paper paper = o->paper.empty() ? report::default_paper() : [&] {
      try {
        return report::parse_paper(o->paper);
      } catch (const InputError& e) {
        throw InputError(fmt::format("--paper: {}", e.what()));
      }
    }();
    // Standard output carries one thing: the JSON, or one file given as "-".
    const std::vector<std::pair<const char*, const std::string*>> files{
        {"--html", &o->html}, {"--pdf", &o->pdf}, {"--xlsx", &o->xlsx}};
    std::string on_stdout = o->json ? "the JSON" : "";
    for (const auto& [option, path] : files)
      if (*path == "-") {
        if (!on_stdout.empty())
          throw InputError(
              fmt::format("{} -: standard output already carries {}", option, on_stdout));
        on_stdout = fmt::format("{} -", option);
      }
    check_folder(o->csv, "--csv");
    if (!o->pdf.empty() && !report::find_chromium())
      throw InputError(
          "--pdf: no Chromium found on PATH to print the PDF; install it (Debian: apt-get "
          "install chromium) or write --html and print that");
    if (!o->xlsx.empty()) report::load_xlsx_writer("--xlsx");
    std::optional<OutputFile> html_file, pdf_file, xlsx_file;
    open_output(html_file, o->html, "--html", false);
    open_output(pdf_file, o->pdf, "--pdf", true);
    open_output(xlsx_file, o->xlsx, "--xlsx", true);

    auto db = ctx.open_ledger();
    const report::Statement s = with_currency_option(
        request.currency, [&] { return report::build_statement(db, request); });
    if (o->json) {
      out(report::statement_json(s));
    } else if (o->html.empty() && o->pdf.empty() && o->xlsx.empty() && o->csv.empty()) {
      out(report::statement_text(s, ctx.style()));
    }
    // With a file on standard output, these notes go to standard error.
    auto wrote = [&](const char* what, const std::string& path) {
      if (o->json || path == "-") return;
      const std::string line = fmt::format("wrote {} {}\n", what, printable(path));
      if (!on_stdout.empty() && !o->json)
        std::fputs(line.c_str(), stderr);
      else
        out(line);
    };
    if (html_file || pdf_file) {
      const std::string html = report::statement_html(s, paper);
      if (html_file) {
        html_file->write(html);
        html_file->commit();
        wrote("HTML", o->html);
      }
      if (pdf_file) {
        std::string dir = (fs::temp_directory_path() / "keel-statement-XXXXXX").string();
        if (!::mkdtemp(dir.data())) throw InputError("--pdf: cannot make a temporary folder");
        const fs::path page = fs::path(dir) / "statement.html";
        try {
          OutputFile page_file(page, {"--pdf"});
          page_file.write(html);
          page_file.commit();
          report::print_pdf(page, *pdf_file);
        } catch (...) {
          std::error_code ec;
          fs::remove_all(dir, ec);
          throw;
        }
        std::error_code ec;
        fs::remove_all(dir, ec);
        wrote("PDF", o->pdf);
      }
    }
    if (xlsx_file) {
      report::write_statement_xlsx(s, *xlsx_file, paper);
      wrote("XLSX", o->xlsx);
    }
    if (!o->csv.empty()) {
      report::write_statement_csv(s, o->csv, "--csv");
      wrote("CSV files to", o->csv);
    }
  });
}

}  // namespace

void register_statement_commands(CLI::App& app, Context& ctx) {
  add_statement(app, ctx);
}

}  // namespace keel::cli
