#include "cli/options.h"

#include <fmt/format.h>

#include <charconv>

#include "core/currency.h"
#include "core/error.h"
#include "core/text.h"

namespace keel::cli {

namespace {
constexpr std::string_view kExamplesHeading = "Examples:";
constexpr std::string_view kExampleIndent = "  ";
}  // namespace

void add_examples(CLI::App& cmd, std::initializer_list<const char*> lines) {
  std::string footer(kExamplesHeading);
  for (const char* line : lines) footer += fmt::format("\n{}{}", kExampleIndent, line);
  cmd.footer(footer);
}

std::vector<std::string> examples(const CLI::App& cmd) {
  std::vector<std::string> lines;
  const std::string footer = cmd.get_footer();
  if (!footer.starts_with(kExamplesHeading)) return lines;
  std::size_t start = kExamplesHeading.size() + 1;
  while (start < footer.size()) {
    std::size_t end = footer.find('\n', start);
    if (end == std::string::npos) end = footer.size();
    lines.push_back(
        footer.substr(start + kExampleIndent.size(), end - start - kExampleIndent.size()));
    start = end + 1;
  }
  return lines;
}

void add_json_flag(CLI::App& cmd, bool& json) {
  cmd.add_flag("--json", json, "Print JSON for scripts");
}

void add_json_and_csv_flags(CLI::App& cmd, bool& json, bool& csv) {
  auto* j = cmd.add_flag("--json", json, "Print JSON for scripts");
  cmd.add_flag("--csv", csv, "Print CSV for spreadsheets (RFC 4180; exact figures, no totals)")
      ->excludes(j);
}

void add_account_option(CLI::App& cmd, std::string& account, const std::string& help) {
  cmd.add_option("--account", account, help);
}

void add_currency_option(CLI::App& cmd, std::string& currency) {
  cmd.add_option("--currency", currency,
                 "Report in this currency, a three-letter code (default: the account's; for the "
                 "whole ledger the one its accounts keep, else the ledger's own)");
}

std::optional<std::string> currency_option(const std::string& text) {
  if (text.empty()) return std::nullopt;
  return parse_currency(text, "--currency");
}

bool names_missing_rate(const InputError& e) {
  // The one wording of a missing rate (market/fx_rates.h).
  return std::string_view(e.what()).find("no exchange rate for ") != std::string_view::npos;
}

std::optional<std::string> text_option(const std::string& text) {
  if (text.empty()) return std::nullopt;
  return text;
}

Date date_value(const std::string& text, std::string_view option) {
  try {
    return Date::parse(text);
  } catch (const InputError& e) {
    throw InputError(fmt::format("{}: {}", option, e.what()));
  }
}

std::optional<Date> date_option(const std::string& text, std::string_view option) {
  if (text.empty()) return std::nullopt;
  return date_value(text, option);
}

Date date_option_or_today(const std::string& text, std::string_view option) {
  return date_option(text, option).value_or(Date::today());
}

Decimal decimal_value(const std::string& text, std::string_view option) {
  try {
    return Decimal::parse(text);
  } catch (const InputError& e) {
    throw InputError(fmt::format("{}: {}", option, e.what()));
  }
}

std::optional<Decimal> decimal_option(const std::string& text, std::string_view option) {
  if (text.empty()) return std::nullopt;
  return decimal_value(text, option);
}

void one_on_standard_output(
    const std::vector<std::pair<std::string_view, const std::string*>>& files, bool json) {
  std::string taken = json ? "the JSON" : "";
  for (const auto& file : files) {
    if (*file.second != "-") continue;
    if (!taken.empty())
      throw InputError(fmt::format("{} -: standard output already carries {}", file.first, taken));
    taken = fmt::format("{} -", file.first);
  }
}

int whole_number(const std::string& text, std::string_view option, int lo, int hi,
                 std::string_view what) {
  int value = 0;
  const auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (text.empty() || ec != std::errc() || end != text.data() + text.size() || value < lo ||
      value > hi)
    throw InputError(fmt::format("{}: '{}' is not {}", option, printable(text), what));
  return value;
}

}  // namespace keel::cli
