#include "model/security.h"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cctype>

#include "core/currency.h"
#include "core/error.h"
#include "core/text.h"

namespace keel {
namespace {
constexpr std::array<std::pair<SecurityKind, std::string_view>, 5> kKinds{{
    {SecurityKind::stock, "stock"},
    {SecurityKind::fund, "fund"},
    {SecurityKind::bond, "bond"},
    {SecurityKind::index, "index"},
    {SecurityKind::currency, "currency"},
}};
}  // namespace

std::string_view to_string(SecurityKind kind) {
  for (const auto& [k, name] : kKinds)
    if (k == kind) return name;
  return "stock";
}

SecurityKind parse_security_kind(std::string_view text) {
  for (const auto& [k, name] : kKinds)
    if (name == text) return k;
  throw InputError(
      fmt::format("unknown security kind '{}'; expected one of: stock, fund, bond, "
                  "index, currency",
                  printable(text)));
}

namespace {

// `code` in capitals when it is exactly `letters` letters A-Z; else unset.
std::optional<std::string> upper_code(std::string_view code, std::size_t letters) {
  std::string out;
  for (char c : code) out.push_back(static_cast<char>(std::toupper(static_cast<unsigned char>(c))));
  const bool ok = out.size() == letters &&
                  std::all_of(out.begin(), out.end(), [](char c) { return c >= 'A' && c <= 'Z'; });
  if (!ok) return std::nullopt;
  return out;
}

}  // namespace

std::string normalize_currency(std::string_view code) {
  const auto out = upper_code(code, 3);
  if (!out)
    throw InputError(
        fmt::format("currency '{}' is not a three-letter code such as EUR", printable(code)));
  if (!is_currency(*out))
    throw InputError(fmt::format("currency '{}' is not an ISO 4217 code (such as EUR, USD, JPY)",
                                 printable(code)));
  return *out;
}

std::string normalize_country(std::string_view code) {
  if (auto out = upper_code(code, 2)) return *out;
  throw InputError(
      fmt::format("country '{}' is not a two-letter ISO 3166-1 code such as NL", printable(code)));
}

void validate(const Security& s) {
  check_identifier("symbol", s.symbol, 40);
  normalize_currency(s.currency);  // refuses anything but three letters
  check_identifier("name", s.name, 200);
  if (s.sector) check_identifier("sector", *s.sector, 100);
  if (s.country && normalize_country(*s.country) != *s.country)
    throw InputError(
        fmt::format("country '{}' must be written in capitals", printable(*s.country)));
  if (!s.lot_size.is_positive())
    throw InputError(fmt::format("lot size of {} must be positive", printable(s.symbol)));
}

}  // namespace keel
