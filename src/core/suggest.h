// "Did you mean": close matches for a mistyped word among the words a
// program knows (command and option names).
//  - edit_distance(): the optimal string alignment distance, counted in
//    bytes: the fewest insertions, deletions, substitutions and swaps of two
//    neighbouring characters that turn a into b, no substring edited twice.
//  - closest(): the candidates at the smallest distance from `word`, when
//    that distance is at most 1 (words of up to 4 bytes) or 2 (longer words),
//    followed by those that start with `word` (2 bytes or more); in the
//    candidates' order, each once. Letters are compared ignoring ASCII case.
//    Empty when nothing is close. Never throws.
#pragma once

#include <cstddef>
#include <string>
#include <string_view>
#include <vector>

namespace keel {

std::size_t edit_distance(std::string_view a, std::string_view b);
std::vector<std::string> closest(std::string_view word, const std::vector<std::string>& candidates);

}  // namespace keel
