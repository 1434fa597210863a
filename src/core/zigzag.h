// Zigzag coding of signed integers (0, -1, 1, -2, ... -> 0, 1, 2, 3, ...), so
// that small changes of either sign take few bytes as LEB128 varints. Used by
// the close packs (market/close_pack.cpp) and the import's price buffer
// (store/price_buffer.cpp). unzigzag(zigzag(v)) == v for every int64; throws
// nothing.
#pragma once

#include <cstdint>

namespace keel {

inline std::uint64_t zigzag(std::int64_t v) {
  return (static_cast<std::uint64_t>(v) << 1) ^ static_cast<std::uint64_t>(v >> 63);
}

inline std::int64_t unzigzag(std::uint64_t v) {
  return static_cast<std::int64_t>(v >> 1) ^ -static_cast<std::int64_t>(v & 1);
}

}  // namespace keel
