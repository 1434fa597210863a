// Read access to daily closes (as traded, not adjusted).
//  - latest_close(): the close on `day` or, failing that, the latest before it.
//  - PriceBook: every close of every security in memory, sorted by day, for
//    valuing many days quickly; at() has the same on-or-before meaning.
//  - PriceBook::Cursor: the same answers as at(), cheaper when the days asked
//    for one security ascend (each call steps forward from the last answer);
//    a day earlier than the last asked falls back to a binary search. It
//    borrows the book, which must outlive it and not change meanwhile.
#pragma once

#include <cstdint>
#include <optional>
#include <unordered_map>
#include <utility>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "store/database.h"

namespace keel::store {

std::optional<Decimal> latest_close(Database& db, std::int64_t security_id, Date day);

class PriceBook {
 public:
  static PriceBook load(Database& db);
  void add(std::int64_t security_id, Date day, Decimal close);  // days must ascend per security
  std::optional<Decimal> at(std::int64_t security_id, Date day) const;
  // Every day on which any security has a close, ascending.
  std::vector<Date> all_days() const;
  // The latest day with any close; unset when the book is empty.
  std::optional<Date> last_day() const;

  class Cursor {
   public:
    explicit Cursor(const PriceBook& book);
    // The close on or before `day`, or nullptr; valid while the book lives.
    const Decimal* at(std::int64_t security_id, Date day);

   private:
    const PriceBook& book_;
    std::vector<std::size_t> next_;  // per series: entries with day <= last asked
    std::vector<Date> asked_;        // per series: the last day asked
  };

 private:
  using Series = std::vector<std::pair<Date, Decimal>>;
  const Series* series_of(std::int64_t security_id, std::size_t& index) const;
  std::unordered_map<std::int64_t, std::size_t> index_;  // security id -> position in series_
  std::vector<Series> series_;
};

}  // namespace keel::store
