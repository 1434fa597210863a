#include "rules/planned_cash.h"

#include <fmt/format.h>

#include <algorithm>

#include "core/error.h"
#include "core/text.h"
#include "rules/rule.h"

namespace keel::rules {

PlannedCash parse_planned_cash(std::string_view option, std::string_view text) {
  static constexpr std::string_view form = "ACCOUNT=AMOUNT, e.g. Savings=1500.00";
  PlannedCash out;
  out.option = std::string(option);
  // Split at the last '=': an amount never holds one, an account name may.
  const auto eq = text.rfind('=');
  std::string_view amount = text;
  if (eq != std::string_view::npos) {
    out.account = std::string(text.substr(0, eq));
    amount = text.substr(eq + 1);
    if (out.account.empty())
      throw InputError(
          fmt::format("{}: '{}' names no account before '=' ({})", option, printable(text), form));
  } else if (const auto colon = text.find(':');
             colon != std::string_view::npos && Decimal::try_parse(text.substr(0, colon))) {
    // The spelling AMOUNT:ACCOUNT is refused with the one to use instead.
    throw InputError(fmt::format("{}: '{}' is not ACCOUNT=AMOUNT; write '{}={}'", option,
                                 printable(text), printable(text.substr(colon + 1)),
                                 printable(text.substr(0, colon))));
  }
  const auto v = Decimal::try_parse(amount);
  if (!v || !v->is_positive() || v->rounded(2) != *v)
    throw InputError(
        fmt::format("{}: '{}' is not an amount above zero with at most two decimals ({})", option,
                    printable(amount), form));
  out.amount = option == "--withdraw" ? -*v : *v;
  return out;
}

void resolve_planned(std::vector<PlannedCash>& planned, const std::vector<Account>& accounts,
                     std::string_view whose) {
  std::vector<std::string> names;
  for (const auto& a : accounts) names.push_back(a.name);
  for (auto& c : planned) {
    if (c.account.empty()) {
      if (accounts.size() != 1)
        throw InputError(
            fmt::format("{}: the {} has {} accounts; name the one the cash goes to or comes from "
                        "(ACCOUNT=AMOUNT; accounts: {})",
                        c.option, whose, accounts.size(), printable_list(names)));
      c.account = accounts.front().name;
    } else if (std::find(names.begin(), names.end(), c.account) == names.end()) {
      const auto near = nearest(c.account, names);
      throw InputError(fmt::format("{}: '{}' is not an account of the {} ({})", c.option,
                                   printable(c.account), whose,
                                   near ? fmt::format("did you mean '{}'?", printable(*near))
                                        : "accounts: " + printable_list(names)));
    }
  }
}

// More than the account holds (managed, at a close) cannot be raised.
void refuse_unraisable(const Portfolio& portfolio, const Quotes& quotes,
                       const HouseholdPrefs& prefs, Date as_of) {
  for (const auto& a : portfolio.accounts) {
    if (!a.cash.is_negative() || !prefs.must_give.count(a.id)) continue;
    Decimal holdings;
    for (const auto& [id, h] : a.holdings)
      if (quotes.at(id).tradable) holdings += h.quantity * quotes.at(id).price;
    if ((a.cash + holdings).is_negative()) {
      const Decimal gives = prefs.must_give.at(a.id);
      throw InputError(fmt::format(
          "--withdraw: account '{}' holds {} in cash{} on {}; it cannot give {}", printable(a.name),
          (a.cash + gives).str(),
          holdings.is_zero() ? "" : fmt::format(" and {} in holdings to sell", holdings.str()),
          as_of.str(), gives.str()));
    }
  }
}

void refuse_ungiven(const Portfolio& portfolio, const OrderPlan& plan, const HouseholdPrefs& prefs,
                    const std::optional<Decimal>& cap, Date as_of) {
  for (const auto& c : plan.cash_after) {
    const auto& a = *std::find_if(portfolio.accounts.begin(), portfolio.accounts.end(),
                                  [&](const AccountState& s) { return s.name == c.account; });
    if (!c.cash.is_negative() || !prefs.must_give.count(a.id)) continue;
    throw InputError(fmt::format(
        "--withdraw: account '{}' cannot give {} on {}: {} (its cash after the orders would be "
        "{})",
        printable(a.name), prefs.must_give.at(a.id).str(), as_of.str(),
        cap && prefs.gain_cap && a.tax == TaxStatus::taxable
            ? fmt::format("its sells stop at the gain cap of {}", cap->fixed(2))
            : std::string("nothing more in it can be sold"),
        c.cash.str()));
  }
}

}  // namespace keel::rules
