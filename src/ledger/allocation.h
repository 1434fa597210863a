// The two ways allocate() (ledger/book.h) takes its steps, with exactly the
// same result, so that a test can hold one against the other.
//
// Contract
//  - allocate_in_integers(): in 128-bit integers when the total and the
//    weights, brought to one scale, fit machine words (at most 18 digits
//    each); else unset. The weights must already be valid (none negative,
//    not all zero) and more than one.
//  - allocate_in_decimals(): in Decimal arithmetic throughout; checks and
//    throws as allocate() does.
#pragma once

#include <optional>
#include <vector>

#include "core/decimal.h"

namespace keel {

std::optional<std::vector<Decimal>> allocate_in_integers(const Decimal& total,
                                                         const std::vector<Decimal>& weights,
                                                         int places);
std::vector<Decimal> allocate_in_decimals(const Decimal& total, const std::vector<Decimal>& weights,
                                          int places);

}  // namespace keel
