// Money-weighted return: the annual rate that discounts a set of dated cash
// flows to zero (internal rate of return, actual/365).
//
// Contract
//  - solve_mwr() finds r in (-1, inf) with  sum_i c_i * (1+r)^(-(d_i - start)/365) = 0.
//    Signs are the caller's choice as long as they are consistent (money put
//    into the portfolio positive, money taken out negative, or the reverse):
//    flipping every sign leaves the roots unchanged.
//  - It never returns a number that is not a root. The status says why there
//    is no single answer: kNoCashFlows (every flow is zero), kNoRoot (all flows
//    one sign, or no sign change of the discounted sum anywhere), or
//    kMultipleRoots (every root found is listed in `roots`).
//  - With one sign change in the date-ordered flows the root is unique
//    (Descartes' rule of signs for real exponents). With more sign changes
//    the whole range where roots can lie is scanned on a fine grid; roots
//    closer together than the grid step could be seen as none. Stretches of
//    the grid where the discounted sum provably keeps one sign are skipped
//    (the answer is the one every grid point would give).
//  - Rates are fractions (0.05 = 5 %). period_rate covers start..end:
//    (1+r)^(days/365) - 1 with days = end - start. Either is absent when it is
//    too large for a double; log_rate = ln(1+r) is then still given.
//  - Throws keel::InputError when a flow lies outside start..end, an amount is
//    not finite, or end is before start.
#pragma once

#include <optional>
#include <span>
#include <string>
#include <vector>

#include "core/date.h"

namespace keel::perf {

struct CashFlow {
  Date day;
  double amount;  // same-day flows may be given separately; they are summed
};

enum class MwrStatus { kOk, kNoCashFlows, kNoRoot, kMultipleRoots };

struct MwrSolution {
  MwrStatus status = MwrStatus::kNoCashFlows;
  // Set when status is kOk.
  std::optional<double> annual_rate;  // r
  std::optional<double> period_rate;  // (1+r)^(days/365) - 1
  std::optional<double> log_rate;     // ln(1+r), finite even when r overflows
  // Every root found, ascending (one element when kOk, two or more when
  // kMultipleRoots); entries can be +inf when a root is beyond double range.
  std::vector<double> roots;
  int flow_sign_changes = 0;  // in date order, after same-day netting
};

MwrSolution solve_mwr(std::span<const CashFlow> flows, Date start, Date end);

const char* to_string(MwrStatus status);
// Why there is no money-weighted return, for people; empty for kOk.
std::string mwr_words(const MwrSolution& m);

}  // namespace keel::perf
