#include "report/cells.h"

#include <fmt/format.h>

namespace keel::report {

Cell Cell::of_text(std::string t) {
  Cell c;
  c.kind = CellKind::text;
  c.text = std::move(t);
  return c;
}
Cell Cell::of_money(const Decimal& d) {
  Cell c;
  c.kind = CellKind::money;
  c.number = d;
  return c;
}
Cell Cell::of_quantity(const Decimal& d) {
  Cell c;
  c.kind = CellKind::quantity;
  c.number = d;
  return c;
}
Cell Cell::of_percent(double x) {
  Cell c;
  c.kind = CellKind::percent;
  c.ratio = x;
  return c;
}
Cell Cell::of_percent(const std::optional<double>& x) {
  return x ? of_percent(*x) : none();
}
Cell Cell::of_percent(const Decimal& fraction) {
  return of_percent(fraction.to_double());
}
Cell Cell::of_date(Date d) {
  Cell c;
  c.kind = CellKind::date;
  c.day = d;
  return c;
}
Cell Cell::of_integer(long long n) {
  Cell c;
  c.kind = CellKind::integer;
  c.whole = n;
  return c;
}

std::string display(const Cell& cell) {
  switch (cell.kind) {
    case CellKind::empty:
      return "";
    case CellKind::text:
      return cell.text;
    case CellKind::money:
      return cell.number.fixed(2);
    case CellKind::quantity:
      return cell.number.str();
    case CellKind::percent:
      return fmt::format("{:.2f}%", cell.ratio * 100);
    case CellKind::date:
      return cell.day.str();
    case CellKind::integer:
      return std::to_string(cell.whole);
  }
  return "";
}

std::vector<std::string> displayed(const std::vector<Cell>& cells) {
  std::vector<std::string> out;
  out.reserve(cells.size());
  for (const auto& c : cells) out.push_back(display(c));
  return out;
}

}  // namespace keel::report
