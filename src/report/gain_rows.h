// Realized gains as table rows: the one layout of a closed lot part that the
// gains report and the statement's realized-gains section share. Columns:
// account, symbol, lot, acquired, disposed, quantity, proceeds, cost, gain,
// and the holding term ("long" or "short") under the heading the caller
// names. Amounts stay exact in the cells; display() rounds money to cents.
#pragma once

#include <string>
#include <vector>

#include "ledger/holdings.h"
#include "report/cells.h"
#include "report/table.h"

namespace keel::report {

std::vector<Table::Column> gain_columns(const std::string& term_heading);
std::vector<Cell> gain_cells(const ledger::GainLine& g);

}  // namespace keel::report
