#include "core/suggest.h"

#include <algorithm>
#include <limits>

#include "core/text.h"

namespace keel {

// Three rows of the dynamic programme (Wagner and Fischer 1974), with the
// transposition step of the optimal string alignment variant. Written here:
// a dozen lines, and Debian's fuzzy-matching libraries bring far more.
std::size_t edit_distance(std::string_view a, std::string_view b) {
  std::vector<std::size_t> before(b.size() + 1), previous(b.size() + 1), current(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) previous[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    current[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const std::size_t substitution = a[i - 1] == b[j - 1] ? 0 : 1;
      current[j] = std::min({previous[j] + 1, current[j - 1] + 1, previous[j - 1] + substitution});
      if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1])
        current[j] = std::min(current[j], before[j - 2] + 1);
    }
    std::swap(before, previous);
    std::swap(previous, current);
  }
  return previous[b.size()];
}

std::vector<std::string> closest(std::string_view word,
                                 const std::vector<std::string>& candidates) {
  const std::string wanted = ascii_lower(word);
  const std::size_t limit = wanted.size() <= 4 ? 1 : 2;
  std::size_t best = std::numeric_limits<std::size_t>::max();
  std::vector<std::size_t> distances;
  for (const auto& c : candidates) {
    distances.push_back(edit_distance(wanted, ascii_lower(c)));
    best = std::min(best, distances.back());
  }
  std::vector<std::string> out;
  auto add = [&](const std::string& c) {
    if (std::find(out.begin(), out.end(), c) == out.end()) out.push_back(c);
  };
  if (best <= limit)
    for (std::size_t i = 0; i < candidates.size(); ++i)
      if (distances[i] == best) add(candidates[i]);
  if (wanted.size() >= 2)
    for (const auto& c : candidates)
      if (ascii_lower(c).starts_with(wanted) && c.size() > wanted.size()) add(c);
  return out;
}

}  // namespace keel
