// Security: something an account can hold or a benchmark can track.
// Symbols are unique in a ledger, 1..40 characters; kinds are a closed set.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

#include "core/decimal.h"

namespace keel {

enum class SecurityKind { stock, fund, bond, index, currency };

std::string_view to_string(SecurityKind kind);
SecurityKind parse_security_kind(std::string_view text);  // throws InputError naming the choices

struct Security {
  std::int64_t id = 0;
  std::string symbol;
  std::string name;
  SecurityKind kind = SecurityKind::stock;
  std::string currency;  // ISO 4217 code; empty: the ledger's (ledger::add_security)
  Decimal lot_size{1};   // smallest tradable unit multiple; 1 = whole shares
  std::optional<std::string> sector;
  std::optional<std::string> country;  // issuer's, ISO 3166-1 alpha-2 ("NL"); descriptive
};

// Checks symbol, name and currency shape; throws InputError naming the field.
void validate(const Security& security);
// "nl" -> "NL"; throws InputError unless two letters A-Z. keel does not
// keep the list of assigned codes: any two letters are accepted.
std::string normalize_country(std::string_view code);
std::string normalize_currency(std::string_view code);  // "usd" -> "USD"; throws unless ISO 4217

}  // namespace keel
