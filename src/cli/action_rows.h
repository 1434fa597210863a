// How a corporate action is shown, the same in `action list` and `history`:
// one table row (or JSON object) with its figures; an action out of the books
// says which void took it out, a void says what it voids.
#pragma once

#include <fmt/format.h>

#include <map>
#include <string>
#include <vector>

#include "core/json.h"
#include "model/records.h"
#include "report/table.h"

namespace keel::cli {

inline std::string action_word(ActionKind kind) {
  std::string word(to_string(kind));
  for (auto& c : word)
    if (c == '_') c = '-';
  return word;
}

struct ActionRows {
  std::map<std::int64_t, std::string> symbols;
  std::map<std::int64_t, std::int64_t> voided_by;  // action -> its void

  ActionRows(std::map<std::int64_t, std::string> by_id, const std::vector<CorporateAction>& all)
      : symbols(std::move(by_id)) {
    for (const auto& a : all)
      if (a.voids_id) voided_by[*a.voids_id] = a.id;
  }

  static report::Table table() {
    using report::Align;
    return report::Table({{"id", Align::right},
                          {"date"},
                          {"action"},
                          {"symbol"},
                          {"into"},
                          {"ratio", Align::right},
                          {"cash", Align::right},
                          {"cost %", Align::right},
                          {"in lieu", Align::right},
                          {"note"}});
  }

  std::string status(const CorporateAction& a) const {
    if (a.voids_id) return fmt::format("voids {}: {}", *a.voids_id, a.note.value_or(""));
    const auto by = voided_by.find(a.id);
    const std::string note = a.note.value_or("");
    if (by != voided_by.end())
      return fmt::format("[void by {}]{}", by->second, note.empty() ? "" : " " + note);
    return note;
  }

  std::vector<std::string> cells(const CorporateAction& a) const {
    auto fig = [](const std::optional<Decimal>& d) { return d ? d->str() : std::string(); };
    return {std::to_string(a.id),
            a.date.str(),
            action_word(a.kind),
            symbol(a.security_id),
            a.target_id ? symbol(*a.target_id) : std::string(),
            fig(a.ratio),
            fig(a.cash),
            fig(a.cost_percent),
            fig(a.in_lieu),
            status(a)};
  }

  void json(JsonWriter& j, const CorporateAction& a) const {
    const auto by = voided_by.find(a.id);
    j.begin_object().member("id", static_cast<long long>(a.id)).member("date", a.date.str());
    j.member("action", std::string(to_string(a.kind))).member("symbol", symbol(a.security_id));
    j.member("into", a.target_id ? std::optional<std::string>(symbol(*a.target_id)) : std::nullopt);
    j.member("ratio", a.ratio).member("cash", a.cash).member("cost_percent", a.cost_percent);
    j.member("in_lieu", a.in_lieu).member("voids", a.voids_id);
    j.member("voided_by",
             by != voided_by.end() ? std::optional<long long>(by->second) : std::nullopt);
    j.member("note", a.note).end_object();
  }

 private:
  std::string symbol(std::int64_t id) const {
    const auto it = symbols.find(id);
    return it == symbols.end() ? std::string() : it->second;
  }
};

}  // namespace keel::cli
