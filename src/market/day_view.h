// DayView: the market::View that reads the ledger for each question, with
// its statements prepared once. Made for `keel propose` and other readers of
// a few names on one day; it answers for any security and any day.
//
// Contract: as market/view.h. The view borrows the Database, which must
// outlive it; the securities are read when it is made, the corporate actions
// on first use, the exchange rates at the first question about one, the rest
// when asked.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "market/view.h"
#include "store/database.h"
#include "store/market_rows.h"

namespace keel::market {

class DayView final : public View {
 public:
  explicit DayView(store::Database& db);

  std::optional<Close> close(std::int64_t security_id, Date day) const override;
  std::optional<Figure> figure(std::int64_t security_id, std::string_view metric,
                               Date day) const override;
  std::vector<Distribution> distributions(std::optional<std::int64_t> security_id, Date from,
                                          Date to) const override;
  std::vector<SplitEvent> splits(std::optional<std::int64_t> security_id, Date from,
                                 Date to) const override;
  std::vector<CorporateAction> actions(std::optional<std::int64_t> security_id, Date from,
                                       Date to) const override;
  std::optional<Date> ended(std::int64_t security_id, Date day) const override;
  const std::vector<Security>& securities() const override { return securities_; }
  std::vector<std::string> metric_names() const override;

  // The latest day with any close; unset when the ledger has none.
  std::optional<Date> latest_close_day() const;
  // The first day after `day` with a close of the security; unset when none.
  std::optional<Date> first_close_after(std::int64_t security_id, Date day) const;

 protected:
  const FxRates& rates_for(const std::string& base, const std::string& quote,
                           Date day) const override;

 private:
  const std::string& text(Date day) const;  // the last day's ISO text, kept
  store::Database& db_;
  mutable store::MarketRows rows_;
  std::vector<Security> securities_;
  mutable std::optional<std::vector<std::string>> metric_names_;
  const std::vector<CorporateAction>& live() const;  // read on first use
  mutable std::optional<std::vector<CorporateAction>> live_;
  mutable std::optional<FxRates> rates_;
  mutable std::optional<Date> day_;
  mutable std::string day_text_;
};

}  // namespace keel::market
