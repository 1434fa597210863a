#include "perf/mwr.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <optional>
#include <utility>

#include "core/error.h"

namespace keel::perf {
namespace {

constexpr double kDaysPerYear = 365.0;
constexpr double kEps = std::numeric_limits<double>::epsilon();

struct Flow {
  double t;  // years since start
  double c;
};

// Work in y = ln(1+r), which maps (-1, inf) onto the whole real line. The
// discounted sum at rate r is  f(y) = sum c_i exp(-y t_i). It is evaluated
// multiplied by the positive factor exp(y t_ref), with t_ref the earliest time
// for y >= 0 and the latest for y < 0, so that no term can overflow; the sign
// and the roots are those of f.
double scaled_npv(const std::vector<Flow>& flows, double y) {
  const double t_ref = y >= 0 ? flows.front().t : flows.back().t;
  // Neumaier's compensated sum: flows of very different size must not lose
  // the small ones.
  double sum = 0.0;
  double carry = 0.0;
  for (const Flow& f : flows) {
    const double term = f.c * std::exp(-y * (f.t - t_ref));
    const double s = sum + term;
    if (std::fabs(sum) >= std::fabs(term)) {
      carry += (sum - s) + term;
    } else {
      carry += (term - s) + sum;
    }
    sum = s;
  }
  return sum + carry;
}

bool opposite(double a, double b) {
  return (a < 0 && b > 0) || (a > 0 && b < 0);
}

// Brent's method (Brent 1973, "Algorithms for Minimization without
// Derivatives", ch. 4): inverse quadratic / secant steps kept inside the
// bracket, falling back to bisection. Requires opposite signs at a and b.
template <typename F>
double brent(const F& g, double a, double b, double fa, double fb) {
  double c = a;
  double fc = fa;
  double d = b - a;
  double e = d;
  for (int iter = 0; iter < 1000; ++iter) {
    if ((fb > 0 && fc > 0) || (fb < 0 && fc < 0)) {
      c = a;
      fc = fa;
      d = e = b - a;
    }
    if (std::fabs(fc) < std::fabs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const double tol = 2.0 * kEps * std::fabs(b) + 1e-300;
    const double m = 0.5 * (c - b);
    if (std::fabs(m) <= tol || fb == 0) return b;
    if (std::fabs(e) >= tol && std::fabs(fa) > std::fabs(fb)) {
      const double s = fb / fa;
      double p = 0;
      double q = 0;
      if (a == c) {
        p = 2.0 * m * s;
        q = 1.0 - s;
      } else {
        const double qa = fa / fc;
        const double r = fb / fc;
        p = s * (2.0 * m * qa * (qa - r) - (b - a) * (r - 1.0));
        q = (qa - 1.0) * (r - 1.0) * (s - 1.0);
      }
      if (p > 0) {
        q = -q;
      } else {
        p = -p;
      }
      if (2.0 * p < std::min(3.0 * m * q - std::fabs(tol * q), std::fabs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = m;
        e = m;
      }
    } else {
      d = m;
      e = m;
    }
    a = b;
    fa = fb;
    b += std::fabs(d) > tol ? d : (m > 0 ? tol : -tol);
    fb = g(b);
  }
  return b;  // not reached for a finite bracket: bisection alone needs < 2100 steps
}

// Every root of f lies in [lo, hi]: beyond hi the earliest flow outweighs all
// others together, below lo the latest one does.
std::pair<double, double> root_bounds(const std::vector<Flow>& flows) {
  const std::size_t n = flows.size();
  double others_of_first = 0;
  double others_of_last = 0;
  for (std::size_t i = 0; i < n; ++i) {
    if (i != 0) others_of_first += std::fabs(flows[i].c);
    if (i != n - 1) others_of_last += std::fabs(flows[i].c);
  }
  const auto bound = [](double others, double dominant, double gap) {
    const double ratio = others / std::fabs(dominant);
    const double y = ratio > 1 ? std::log(ratio) / gap : 0.0;
    return y + 1e-3 + 1e-9 * y;
  };
  const double hi = bound(others_of_first, flows.front().c, flows[1].t - flows[0].t);
  const double lo = -bound(others_of_last, flows.back().c, flows[n - 1].t - flows[n - 2].t);
  return {lo, hi};
}

// Grid dense near y = 0 (ordinary rates) and coarser far out: uniform in
// asinh(y). A step of about 0.0025 in ln(1+r) near zero. A point is worked
// out when first asked for: the scan looks at few of them.
class ScanGrid {
 public:
  static constexpr int kSteps = 8192;
  ScanGrid(double lo, double hi)
      : lo_(lo), hi_(hi), u0_(std::asinh(lo)), u1_(std::asinh(hi)), ys_(kSteps + 1) {}
  std::size_t size() const { return ys_.size(); }
  double operator[](std::size_t k) {
    if (k == 0) return lo_;
    if (k == kSteps) return hi_;
    auto& y = ys_[k];
    if (!y) y = std::sinh(u0_ + (u1_ - u0_) * static_cast<int>(k) / kSteps);
    return *y;
  }

 private:
  double lo_, hi_, u0_, u1_;
  std::vector<std::optional<double>> ys_;
};

// Proof that f has no root on a stretch of the scan. Split f into its inflow
// and outflow parts, f = P - N with P, N >= 0: each is a sum of c exp(-y t)
// with t >= 0, so both fall as y rises. On [a, b] then P >= P(b) and N <= N(a):
// if P(b) > N(a), f > 0 on all of [a, b] (and f < 0 if N(b) > P(a)). The parts
// are compared as logarithms (log-sum-exp), which neither overflow nor
// underflow, with a relative margin far above the rounding of scaled_npv, so
// a stretch is passed over only where the full sum's sign is certain.
class SignBound {
 public:
  explicit SignBound(const std::vector<Flow>& flows) {
    for (const Flow& f : flows) {
      (f.c > 0 ? in_ : out_).push_back({f.t, std::log(std::fabs(f.c))});
    }
  }
  struct Logs {
    double in;   // ln P(y)
    double out;  // ln N(y)
  };
  Logs at(double y) const { return {log_sum(in_, y), log_sum(out_, y)}; }
  // True when f keeps one strict sign on [a, b], given the logs at a and b.
  static bool one_sign(const Logs& a, const Logs& b) {
    constexpr double kMargin = 1e-8;  // relative; the sums are good to ~1e-13
    return b.in > a.out + kMargin || b.out > a.in + kMargin;
  }

 private:
  struct Term {
    double t;
    double log_c;
  };
  // ln sum exp(log_c - y t). A term below exp(-700) of the largest is left
  // out: it cannot move the sum by a relative 1e-290, far inside the margin.
  static double log_sum(const std::vector<Term>& terms, double y) {
    if (terms.empty()) return -std::numeric_limits<double>::infinity();
    double top = -std::numeric_limits<double>::infinity();
    for (const Term& k : terms) top = std::max(top, k.log_c - y * k.t);
    double sum = 0;
    for (const Term& k : terms) {
      const double x = k.log_c - y * k.t - top;
      if (x > -700) sum += std::exp(x);
    }
    return top + std::log(sum);
  }
  std::vector<Term> in_;
  std::vector<Term> out_;
};

// Every root of f on the scan grid, as a full evaluation of f at every grid
// point would find it (a zero at a point, or Brent's method between adjacent
// points of opposite sign), but f is only evaluated where SignBound cannot
// rule a root out: the grid's index range is halved recursively and a half
// proved to keep one sign is skipped.
template <typename F>
std::vector<double> scan_roots(const std::vector<Flow>& flows, const F& g, double lo, double hi) {
  ScanGrid ys(lo, hi);
  const SignBound bound(flows);
  const std::size_t last = ys.size() - 1;
  std::vector<std::optional<SignBound::Logs>> logs(ys.size());
  const auto logs_at = [&](std::size_t k) -> const SignBound::Logs& {
    if (!logs[k]) logs[k] = bound.at(ys[k]);
    return *logs[k];
  };
  std::vector<std::optional<double>> gs(ys.size());
  std::vector<std::pair<std::size_t, std::size_t>> pending{{0, last}};
  while (!pending.empty()) {
    const auto [i, j] = pending.back();
    pending.pop_back();
    if (SignBound::one_sign(logs_at(i), logs_at(j))) continue;
    if (j - i == 1) {
      if (!gs[i]) gs[i] = g(ys[i]);
      if (!gs[j]) gs[j] = g(ys[j]);
      continue;
    }
    const std::size_t m = i + (j - i) / 2;
    pending.push_back({m, j});
    pending.push_back({i, m});
  }
  // Points skipped lie where f keeps one strict sign: no zero there, and no
  // sign change between a skipped point and its neighbours.
  std::vector<double> roots;
  for (std::size_t k = 0; k <= last; ++k) {
    if (!gs[k]) continue;
    if (*gs[k] == 0) {
      roots.push_back(ys[k]);
    } else if (k < last && gs[k + 1] && opposite(*gs[k], *gs[k + 1])) {
      roots.push_back(brent(g, ys[k], ys[k + 1], *gs[k], *gs[k + 1]));
    }
  }
  return roots;
}

}  // namespace

const char* to_string(MwrStatus status) {
  switch (status) {
    case MwrStatus::kOk:
      return "ok";
    case MwrStatus::kNoCashFlows:
      return "no cash flows";
    case MwrStatus::kNoRoot:
      return "no rate solves the equation";
    case MwrStatus::kMultipleRoots:
      return "more than one rate solves the equation";
  }
  return "unknown";
}

MwrSolution solve_mwr(std::span<const CashFlow> input, Date start, Date end) {
  if (end < start)
    throw InputError(
        fmt::format("money-weighted return: the period ends ({}) before it starts ({})", end.str(),
                    start.str()));
  // One amount a day, by day; input already in that form (measure()'s) is
  // taken as it is.
  bool by_day_already = true;
  for (std::size_t i = 0; i < input.size(); ++i) {
    const CashFlow& f = input[i];
    if (f.day < start || f.day > end)
      throw InputError(fmt::format("money-weighted return: a flow on {} lies outside {}..{}",
                                   f.day.str(), start.str(), end.str()));
    if (!std::isfinite(f.amount))
      throw InputError(
          fmt::format("money-weighted return: the flow on {} is not a finite number", f.day.str()));
    if (i > 0 && !(input[i - 1].day < f.day)) by_day_already = false;
  }
  std::vector<Flow> flows;
  if (by_day_already) {
    for (const CashFlow& f : input)
      if (f.amount != 0) flows.push_back({(f.day - start) / kDaysPerYear, f.amount});
  } else {
    std::map<Date, double> by_day;
    for (const CashFlow& f : input) by_day[f.day] += f.amount;
    for (const auto& [day, amount] : by_day)
      if (amount != 0) flows.push_back({(day - start) / kDaysPerYear, amount});
  }

  MwrSolution out;
  if (flows.empty()) {
    out.status = MwrStatus::kNoCashFlows;
    return out;
  }
  for (std::size_t i = 1; i < flows.size(); ++i) {
    if (opposite(flows[i - 1].c, flows[i].c)) ++out.flow_sign_changes;
  }
  if (out.flow_sign_changes == 0) {
    out.status = MwrStatus::kNoRoot;
    return out;
  }

  const auto g = [&flows](double y) { return scaled_npv(flows, y); };
  const auto [lo, hi] = root_bounds(flows);
  std::vector<double> log_roots;
  const double g_lo = g(lo);
  const double g_hi = g(hi);
  if (out.flow_sign_changes == 1 && opposite(g_lo, g_hi)) {
    // Exactly one root, bracketed by the bounds.
    log_roots.push_back(brent(g, lo, hi, g_lo, g_hi));
  } else {
    // Several sign changes (or, defensively, bounds that do not bracket):
    // scan the whole range where roots can lie.
    log_roots = scan_roots(flows, g, lo, hi);
  }

  for (double y : log_roots) out.roots.push_back(std::expm1(y));
  if (log_roots.empty()) {
    out.status = MwrStatus::kNoRoot;
  } else if (log_roots.size() > 1) {
    out.status = MwrStatus::kMultipleRoots;
  } else {
    const double y = log_roots.front();
    out.status = MwrStatus::kOk;
    out.log_rate = y;
    const double r = std::expm1(y);
    if (std::isfinite(r)) out.annual_rate = r;
    const double period = std::expm1(y * ((end - start) / kDaysPerYear));
    if (std::isfinite(period)) out.period_rate = period;
  }
  return out;
}

std::string mwr_words(const MwrSolution& m) {
  switch (m.status) {
    case MwrStatus::kOk:
      return "";
    case MwrStatus::kNoCashFlows:
      return "no money-weighted return: the period has no value and no flows";
    case MwrStatus::kNoRoot:
      return "no money-weighted return: no rate makes the flows and values balance";
    case MwrStatus::kMultipleRoots:
      return fmt::format(
          "no single money-weighted return: {} different rates balance the flows and values",
          m.roots.size());
  }
  return "";
}

}  // namespace keel::perf
