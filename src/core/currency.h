// Currencies: ISO 4217 codes and their minor units.
//
// Contract
//  - is_currency(code): `code` is an active ISO 4217 alphabetic code with a
//    minor unit (funds and precious-metal codes without one are not money a
//    brokerage account holds as cash, so they are left out).
//  - minor_units(code): the number of decimal places of the currency (JPY 0,
//    EUR 2, KWD 3, CLF 4). Throws InputError for a code not in the table.
//  - parse_currency(text, where): upper-cases `text` and returns the code;
//    throws InputError "<where>: '<text>' is not an ISO 4217 currency code" on
//    anything else. `where` names the option or file:line:column.
//  - round_money(amount, code): half-to-even to the currency's minor units.
//
// The table is written by hand from ISO 4217 List One (current currency and
// funds codes), published by SIX Financial Information AG as the
// maintenance agency on behalf of ISO; transcribed from memory of that list,
// so check a code against the published list before relying on it.
#pragma once

#include <string>
#include <string_view>

#include "core/decimal.h"

namespace keel {

bool is_currency(std::string_view code);
int minor_units(std::string_view code);
std::string parse_currency(std::string_view text, std::string_view where);
Decimal round_money(const Decimal& amount, std::string_view code);

}  // namespace keel
