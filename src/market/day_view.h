// DayView: the market::View that reads the ledger for each question, with
// its statements prepared once. Made for `keel propose` and other readers of
// a few names on one day; it answers for any security and any day.
//
// Contract: as market/view.h. The view borrows the Database, which must
// outlive it; its statements are prepared at the first question that needs
// them, the securities, corporate actions and exchange rates are read at the
// first question about them, the rest when asked. latest_close_day() reads
// each security's latest close, in one statement, and keeps them: close()
// then answers a day on or after a security's latest close from them, as the
// ledger stood at that read (the next call reads them again).
#pragma once

#include <memory>
#include <optional>
#include <string>
#include <unordered_map>
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
  const std::vector<Security>& securities() const override;
  std::vector<std::string> metric_names() const override;

  // The latest day with any close; unset when the ledger has none. Keeps
  // each security's latest close for close().
  std::optional<Date> latest_close_day() const;
  // The first day after `day` with a close of the security; unset when none.
  std::optional<Date> first_close_after(std::int64_t security_id, Date day) const;

 protected:
  const FxRates& rates_for(const std::string& base, const std::string& quote,
                           Date day) const override;

 private:
  const std::string& text(Date day) const;  // the last day's ISO text, kept
  store::MarketRows& rows() const;          // prepared on first use
  store::Database& db_;
  mutable std::unique_ptr<store::MarketRows> rows_;
  mutable std::optional<std::vector<Security>> securities_;
  // Each security's latest close, by id, as latest_close_day() read them.
  mutable std::optional<std::unordered_map<std::int64_t, Close>> latest_;
  mutable std::optional<std::vector<std::string>> metric_names_;
  const std::vector<CorporateAction>& live() const;  // read on first use
  mutable std::optional<std::vector<CorporateAction>> live_;
  mutable std::optional<FxRates> rates_;
  mutable std::optional<Date> day_;
  mutable std::string day_text_;
};

}  // namespace keel::market
