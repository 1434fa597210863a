// Recording and voiding corporate actions (ledger/actions.h says what each
// does to lots).
//
// post_action() checks the request's shape, resolves the symbols, refuses an
// action on a day when no account holds the security, a second live action of
// the same kind on the same security and day, and anything in a reconciled
// period of a holding account; then writes the row and replays the whole
// ledger inside one write transaction. Any refusal throws InputError
// (ShapeError for a figure, naming it as an option: "--ratio") and leaves the
// ledger as it was.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "ledger/posting.h"
#include "model/records.h"
#include "store/database.h"

namespace keel::ledger {

// The option that records an action no account holds (ActionRequest::market_only).
inline constexpr const char* kMarketOnlyFlag = "--market-only";

struct ActionRequest {
  ActionKind kind = ActionKind::split;
  Date date;
  std::string symbol;
  std::optional<std::string> target;  // merger: acquirer; spin-off: new security
  std::optional<Decimal> ratio;
  std::optional<Decimal> cash;
  std::optional<Decimal> cost_percent;
  bool cash_in_lieu = false;             // fractions are paid in cash ...
  std::optional<Decimal> in_lieu_price;  // ... at this price per unit (required then)
  std::optional<std::string> note;
  bool allow_future = false;
  // Market data only: no account holds the security on the day, and none
  // need to (a name of a back-test's universe). Without it, an action nobody
  // holds is refused as a likely slip of symbol or date; with it, an action
  // some account holds is refused, since it would change that account's lots.
  bool market_only = false;
};

// Throws ShapeError naming the first figure missing, extra or out of range:
// ratios must be positive, percentages above 0 and at most 100, cash per unit
// positive (zero allowed for a delisting), cash in lieu needs its price.
void check_action_shape(const ActionRequest& request);

struct PostedAction {
  std::int64_t id = 0;
  // Merger with cash and stock and no stated split of cost: the share that
  // went to the stock part, by market value on the day (see the .cpp).
  std::optional<Decimal> derived_cost_percent;
};
PostedAction post_action(store::Database& db, const ActionRequest& request);
// The same checks and write without the replay and outside any transaction of
// its own, for importers: the caller replays once (check_ledger) and commits.
PostedAction write_action_unchecked(store::Database& db, const ActionRequest& request);

// Records a void of action `id` with `reason`; returns the void's id. Refuses
// an unknown id, a void, or an action already voided.
std::int64_t void_action(store::Database& db, std::int64_t id, const std::string& reason);

}  // namespace keel::ledger
