// Typed table cells: a value and what it is (money, quantity, percent, date,
// ...), so that each form of a table can show it its own way. display() gives
// the terminal's form: money with two places, percent with two places and a
// % sign, quantities exact, "" for an empty cell. Money and quantity cells
// keep the exact Decimal.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"

namespace keel::report {

enum class CellKind { empty, text, money, quantity, percent, date, integer };

struct Cell {
  CellKind kind = CellKind::empty;
  std::string text;  // text cells
  Decimal number;    // money and quantity cells
  double ratio = 0;  // percent cells (a fraction)
  Date day;          // date cells
  long long whole = 0;

  static Cell none() { return {}; }
  static Cell of_text(std::string t);
  static Cell of_money(const Decimal& d);
  static Cell of_quantity(const Decimal& d);
  static Cell of_percent(double x);
  static Cell of_percent(const std::optional<double>& x);  // empty when unset
  static Cell of_percent(const Decimal& fraction);
  static Cell of_date(Date d);
  static Cell of_integer(long long n);
};

std::string display(const Cell& cell);
std::vector<std::string> displayed(const std::vector<Cell>& cells);  // display() of each

}  // namespace keel::report
