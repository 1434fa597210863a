#include "core/currency.h"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cctype>

#include "core/error.h"
#include "core/text.h"

namespace keel {
namespace {

struct Entry {
  std::string_view code;
  int minor;
};

// ISO 4217 List One, alphabetic code and minor unit; sorted by code for
// binary search. See the header for the source.
constexpr std::array kCurrencies = {
    Entry{"AED", 2}, Entry{"AFN", 2}, Entry{"ALL", 2}, Entry{"AMD", 2}, Entry{"ANG", 2},
    Entry{"AOA", 2}, Entry{"ARS", 2}, Entry{"AUD", 2}, Entry{"AWG", 2}, Entry{"AZN", 2},
    Entry{"BAM", 2}, Entry{"BBD", 2}, Entry{"BDT", 2}, Entry{"BGN", 2}, Entry{"BHD", 3},
    Entry{"BIF", 0}, Entry{"BMD", 2}, Entry{"BND", 2}, Entry{"BOB", 2}, Entry{"BOV", 2},
    Entry{"BRL", 2}, Entry{"BSD", 2}, Entry{"BTN", 2}, Entry{"BWP", 2}, Entry{"BYN", 2},
    Entry{"BZD", 2}, Entry{"CAD", 2}, Entry{"CDF", 2}, Entry{"CHE", 2}, Entry{"CHF", 2},
    Entry{"CHW", 2}, Entry{"CLF", 4}, Entry{"CLP", 0}, Entry{"CNY", 2}, Entry{"COP", 2},
    Entry{"COU", 2}, Entry{"CRC", 2}, Entry{"CUP", 2}, Entry{"CVE", 2}, Entry{"CZK", 2},
    Entry{"DJF", 0}, Entry{"DKK", 2}, Entry{"DOP", 2}, Entry{"DZD", 2}, Entry{"EGP", 2},
    Entry{"ERN", 2}, Entry{"ETB", 2}, Entry{"EUR", 2}, Entry{"FJD", 2}, Entry{"FKP", 2},
    Entry{"GBP", 2}, Entry{"GEL", 2}, Entry{"GHS", 2}, Entry{"GIP", 2}, Entry{"GMD", 2},
    Entry{"GNF", 0}, Entry{"GTQ", 2}, Entry{"GYD", 2}, Entry{"HKD", 2}, Entry{"HNL", 2},
    Entry{"HTG", 2}, Entry{"HUF", 2}, Entry{"IDR", 2}, Entry{"ILS", 2}, Entry{"INR", 2},
    Entry{"IQD", 3}, Entry{"IRR", 2}, Entry{"ISK", 0}, Entry{"JMD", 2}, Entry{"JOD", 3},
    Entry{"JPY", 0}, Entry{"KES", 2}, Entry{"KGS", 2}, Entry{"KHR", 2}, Entry{"KMF", 0},
    Entry{"KPW", 2}, Entry{"KRW", 0}, Entry{"KWD", 3}, Entry{"KYD", 2}, Entry{"KZT", 2},
    Entry{"LAK", 2}, Entry{"LBP", 2}, Entry{"LKR", 2}, Entry{"LRD", 2}, Entry{"LSL", 2},
    Entry{"LYD", 3}, Entry{"MAD", 2}, Entry{"MDL", 2}, Entry{"MGA", 2}, Entry{"MKD", 2},
    Entry{"MMK", 2}, Entry{"MNT", 2}, Entry{"MOP", 2}, Entry{"MRU", 2}, Entry{"MUR", 2},
    Entry{"MVR", 2}, Entry{"MWK", 2}, Entry{"MXN", 2}, Entry{"MXV", 2}, Entry{"MYR", 2},
    Entry{"MZN", 2}, Entry{"NAD", 2}, Entry{"NGN", 2}, Entry{"NIO", 2}, Entry{"NOK", 2},
    Entry{"NPR", 2}, Entry{"NZD", 2}, Entry{"OMR", 3}, Entry{"PAB", 2}, Entry{"PEN", 2},
    Entry{"PGK", 2}, Entry{"PHP", 2}, Entry{"PKR", 2}, Entry{"PLN", 2}, Entry{"PYG", 0},
    Entry{"QAR", 2}, Entry{"RON", 2}, Entry{"RSD", 2}, Entry{"RUB", 2}, Entry{"RWF", 0},
    Entry{"SAR", 2}, Entry{"SBD", 2}, Entry{"SCR", 2}, Entry{"SDG", 2}, Entry{"SEK", 2},
    Entry{"SGD", 2}, Entry{"SHP", 2}, Entry{"SLE", 2}, Entry{"SOS", 2}, Entry{"SRD", 2},
    Entry{"SSP", 2}, Entry{"STN", 2}, Entry{"SVC", 2}, Entry{"SYP", 2}, Entry{"SZL", 2},
    Entry{"THB", 2}, Entry{"TJS", 2}, Entry{"TMT", 2}, Entry{"TND", 3}, Entry{"TOP", 2},
    Entry{"TRY", 2}, Entry{"TTD", 2}, Entry{"TWD", 2}, Entry{"TZS", 2}, Entry{"UAH", 2},
    Entry{"UGX", 0}, Entry{"USD", 2}, Entry{"USN", 2}, Entry{"UYI", 0}, Entry{"UYU", 2},
    Entry{"UYW", 4}, Entry{"UZS", 2}, Entry{"VED", 2}, Entry{"VES", 2}, Entry{"VND", 0},
    Entry{"VUV", 0}, Entry{"WST", 2}, Entry{"XAF", 0}, Entry{"XCD", 2}, Entry{"XCG", 2},
    Entry{"XOF", 0}, Entry{"XPF", 0}, Entry{"YER", 2}, Entry{"ZAR", 2}, Entry{"ZMW", 2},
    Entry{"ZWG", 2},
};

const Entry* find(std::string_view code) {
  const auto it = std::lower_bound(kCurrencies.begin(), kCurrencies.end(), code,
                                   [](const Entry& e, std::string_view c) { return e.code < c; });
  return it != kCurrencies.end() && it->code == code ? &*it : nullptr;
}

}  // namespace

bool is_currency(std::string_view code) {
  return find(code) != nullptr;
}

int minor_units(std::string_view code) {
  if (const Entry* e = find(code)) return e->minor;
  throw InputError(fmt::format("'{}' is not an ISO 4217 currency code", printable(code)));
}

std::string parse_currency(std::string_view text, std::string_view where) {
  std::string code;
  for (char c : text)
    code.push_back(static_cast<char>(std::toupper(static_cast<unsigned char>(c))));
  if (!is_currency(code))
    throw InputError(
        fmt::format("{}{}'{}' is not an ISO 4217 currency code (such as EUR, USD, JPY)", where,
                    where.empty() ? "" : ": ", printable(text)));
  return code;
}

Decimal round_money(const Decimal& amount, std::string_view code) {
  return amount.rounded(minor_units(code));
}

}  // namespace keel
