#include "report/gain_rows.h"

namespace keel::report {

std::vector<Table::Column> gain_columns(const std::string& term_heading) {
  // Names shorten to fit a terminal; then the lot number and the quantity
  // make way, never the dates or the money.
  return {{"account", Align::left, true},
          {"symbol"},
          {"lot", Align::right, false, 2},
          {"acquired"},
          {"disposed"},
          {"quantity", Align::right, false, 1},
          {"proceeds", Align::right},
          {"cost", Align::right},
          {"gain", Align::right},
          {term_heading}};
}

std::vector<Cell> gain_cells(const ledger::GainLine& g) {
  return {Cell::of_text(g.account),        Cell::of_text(g.symbol),
          Cell::of_integer(g.part.lot_id), Cell::of_date(g.part.acquired),
          Cell::of_date(g.part.disposed),  Cell::of_quantity(g.part.quantity),
          Cell::of_money(g.part.proceeds), Cell::of_money(g.part.cost),
          Cell::of_money(g.part.gain()),   Cell::of_text(g.long_term ? "long" : "short")};
}

}  // namespace keel::report
