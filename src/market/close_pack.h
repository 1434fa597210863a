// Close packs: every close of one security in a compact byte string, kept in
// the ledger's close_pack table (migration 0011) so that loading many days of
// closes (market::Series) reads one value per security instead of one row per
// day.
//
// Contract
//  - PackedClose is a close as stored: its day and the digits of its
//    canonical decimal text ("123.45" is mantissa 12345, scale 2).
//  - plain_close() reads canonical decimal text without sign or exponent, as
//    the ledger stores closes, into a PackedClose; false for anything else or
//    beyond the limits a pack keeps (scale at most 15, mantissa below 2^50:
//    every such close is exactly value x 10^scale in a double).
//  - pack_closes() packs closes ascending by day; unpack_closes() gives them
//    back exactly, and false (with `out` unspecified) for bytes that are not
//    a pack this program wrote. kUnpackable is the pack of a security with a
//    close outside those limits: its closes are read from the table; it is
//    kept with the last day kUnpackableLastDay, so that any change of the
//    security's closes drops it.
//  - The ledger keeps a pack with the day of its last close (close_pack,
//    migration 0012); closes dated after that day are its tail, read from the
//    rows and merged at load (market::Series). A load that finds at least
//    kPackTailLimit closes in a tail packs the security again.
//  - Nothing here throws but std::bad_alloc.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "core/date.h"

namespace keel::market {

struct PackedClose {
  Date day;
  std::int64_t mantissa = 0;
  int scale = 0;
  friend bool operator==(const PackedClose&, const PackedClose&) = default;
};

constexpr int kPackMaxScale = 15;
constexpr std::int64_t kPackMantissaLimit = std::int64_t{1} << 50;

bool plain_close(std::string_view text, std::int64_t& mantissa, int& scale);

inline const std::string kUnpackable(1, '\0');
constexpr std::string_view kUnpackableLastDay = "9999-12-31";
constexpr std::size_t kPackTailLimit = 64;
std::string pack_closes(const std::vector<PackedClose>& closes);
bool unpack_closes(std::string_view packed, std::vector<PackedClose>& out);

}  // namespace keel::market
