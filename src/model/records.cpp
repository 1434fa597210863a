#include "model/records.h"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <charconv>
#include <unordered_set>

#include "core/error.h"
#include "core/text.h"

namespace keel {
namespace {

constexpr std::array<std::pair<BasisMethod, std::string_view>, 5> kMethods{{
    {BasisMethod::fifo, "fifo"},
    {BasisMethod::lifo, "lifo"},
    {BasisMethod::hifo, "hifo"},
    {BasisMethod::average, "average"},
    {BasisMethod::specific, "specific"},
}};

constexpr std::array<std::pair<TxnKind, std::string_view>, 12> kKinds{{
    {TxnKind::deposit, "deposit"},
    {TxnKind::withdrawal, "withdrawal"},
    {TxnKind::buy, "buy"},
    {TxnKind::sell, "sell"},
    {TxnKind::dividend, "dividend"},
    {TxnKind::interest, "interest"},
    {TxnKind::tax, "tax"},
    {TxnKind::fee, "fee"},
    {TxnKind::transfer_in, "transfer_in"},
    {TxnKind::transfer_out, "transfer_out"},
    {TxnKind::exchange, "exchange"},
    {TxnKind::void_entry, "void"},
}};

constexpr std::array<std::pair<TaxStatus, std::string_view>, 3> kStatuses{{
    {TaxStatus::taxable, "taxable"},
    {TaxStatus::tax_deferred, "tax-deferred"},
    {TaxStatus::tax_exempt, "tax-exempt"},
}};

template <typename Table>
std::string choices(const Table& table, std::size_t count) {
  std::string out;
  for (std::size_t i = 0; i < count; ++i) {
    if (i) out += ", ";
    out += table[i].second;
  }
  return out;
}

}  // namespace

std::string_view to_string(BasisMethod method) {
  for (const auto& [m, name] : kMethods)
    if (m == method) return name;
  return "fifo";
}

BasisMethod parse_basis_method(std::string_view text) {
  for (const auto& [m, name] : kMethods)
    if (name == text) return m;
  throw InputError(fmt::format("unknown cost-basis method '{}'; expected one of: {}",
                               printable(text), choices(kMethods, kMethods.size())));
}

std::string_view to_string(TaxStatus status) {
  for (const auto& [s, name] : kStatuses)
    if (s == status) return name;
  return "taxable";
}

TaxStatus parse_tax_status(std::string_view text) {
  for (const auto& [s, name] : kStatuses)
    if (name == text) return s;
  throw InputError(fmt::format("unknown tax status '{}'; expected one of: {}", printable(text),
                               choices(kStatuses, kStatuses.size())));
}

std::string_view to_string(TxnKind kind) {
  for (const auto& [k, name] : kKinds)
    if (k == kind) return name;
  return "deposit";
}

TxnKind parse_txn_kind(std::string_view text) {
  // "void" is recorded only through 'keel void', never as a plain kind.
  for (std::size_t i = 0; i + 1 < kKinds.size(); ++i)
    if (kKinds[i].second == text) return kKinds[i].first;
  throw InputError(fmt::format("unknown transaction kind '{}'; expected one of: {}",
                               printable(text), choices(kKinds, kKinds.size() - 1)));
}

namespace {
constexpr std::array<std::pair<ActionKind, std::string_view>, 7> kActionKinds{{
    {ActionKind::split, "split"},
    {ActionKind::merger, "merger"},
    {ActionKind::spinoff, "spinoff"},
    {ActionKind::return_of_capital, "return_of_capital"},
    {ActionKind::stock_dividend, "stock_dividend"},
    {ActionKind::delisting, "delisting"},
    {ActionKind::void_entry, "void"},
}};
}  // namespace

std::string_view to_string(ActionKind kind) {
  for (const auto& [k, name] : kActionKinds)
    if (k == kind) return name;
  return "split";
}

ActionKind parse_action_kind(std::string_view text) {
  for (std::size_t i = 0; i + 1 < kActionKinds.size(); ++i)
    if (kActionKinds[i].second == text) return kActionKinds[i].first;
  throw InputError(fmt::format("unknown corporate action '{}'; expected one of: {}",
                               printable(text), choices(kActionKinds, kActionKinds.size() - 1)));
}

bool is_cash_kind(TxnKind kind) {
  switch (kind) {
    case TxnKind::deposit:
    case TxnKind::withdrawal:
    case TxnKind::dividend:
    case TxnKind::interest:
    case TxnKind::tax:
    case TxnKind::fee:
      return true;
    default:
      return false;
  }
}

std::vector<LotPick> parse_lot_picks(std::string_view text) {
  std::vector<LotPick> picks;
  std::size_t start = 0;
  while (start <= text.size()) {
    const std::size_t comma = text.find(',', start);
    const std::string_view item = text.substr(
        start, comma == std::string_view::npos ? std::string_view::npos : comma - start);
    const std::size_t colon = item.find(':');
    LotPick pick;
    const auto id_text = item.substr(0, colon);
    const auto [end, ec] =
        std::from_chars(id_text.data(), id_text.data() + id_text.size(), pick.lot_id);
    if (colon == std::string_view::npos || ec != std::errc() ||
        end != id_text.data() + id_text.size() || pick.lot_id <= 0)
      throw InputError(
          fmt::format("lots '{}' must look like LOT:QUANTITY[,LOT:QUANTITY...], e.g. 12:5,14:2.5",
                      printable(text)));
    pick.quantity = Decimal::parse(item.substr(colon + 1));
    if (!pick.quantity.is_positive())
      throw InputError(fmt::format("lot {} quantity must be positive", pick.lot_id));
    picks.push_back(pick);
    if (comma == std::string_view::npos) break;
    start = comma + 1;
  }
  return picks;
}

std::string format_lot_picks(const std::vector<LotPick>& picks) {
  std::string out;
  for (const auto& p : picks) {
    if (!out.empty()) out += ',';
    out += fmt::format("{}:{}", p.lot_id, p.quantity.str());
  }
  return out;
}

std::vector<const CorporateAction*> live_actions(const std::vector<CorporateAction>& all) {
  std::unordered_set<std::int64_t> voided;
  for (const auto& a : all)
    if (a.kind == ActionKind::void_entry && a.voids_id) voided.insert(*a.voids_id);
  std::vector<const CorporateAction*> out;
  for (const auto& a : all)
    if (a.kind != ActionKind::void_entry && !voided.count(a.id)) out.push_back(&a);
  std::stable_sort(out.begin(), out.end(), [](const auto* x, const auto* y) {
    return x->date != y->date ? x->date < y->date : x->id < y->id;
  });
  return out;
}

}  // namespace keel
