// perf_probe: test-only driver for the performance module. Reads a series
// CSV (day,value,inflow,outflow) and optionally a benchmark CSV (day,level),
// runs keel::perf::measure() and prints every figure as JSON (null where a
// figure is undefined), so reference scripts can compare.
//
// usage: perf_probe --series FILE --from YYYY-MM-DD --to YYYY-MM-DD
//                   [--benchmark FILE] [--risk-free RATE]
#include <fmt/format.h>

#include <fstream>
#include <iostream>
#include <nlohmann/json.hpp>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include "core/error.h"
#include "perf/performance.h"

using keel::Date;
using keel::Decimal;
using nlohmann::json;
using namespace keel::perf;

namespace {

std::vector<std::vector<std::string>> read_csv(const std::string& path, std::size_t columns) {
  std::ifstream file(path);
  if (!file) throw keel::InputError(fmt::format("cannot open {}", path));
  std::vector<std::vector<std::string>> rows;
  std::string line;
  bool header = true;
  while (std::getline(file, line)) {
    if (line.empty()) continue;
    if (header) {
      header = false;
      continue;
    }
    std::vector<std::string> cells;
    std::stringstream ss(line);
    std::string cell;
    while (std::getline(ss, cell, ',')) cells.push_back(cell);
    if (cells.size() != columns)
      throw keel::InputError(fmt::format("{}: expected {} columns in '{}'", path, columns, line));
    rows.push_back(cells);
  }
  return rows;
}

json opt(const std::optional<double>& x) {
  return x ? json(*x) : json(nullptr);
}

json figure(const std::optional<ReturnFigure>& f) {
  if (!f) return nullptr;
  return {{"period", f->period}, {"annualized", opt(f->annualized)}};
}

json to_json(const PerfResult& r) {
  json out;
  out["days"] = r.days;
  out["opening_value"] = r.opening_value.str();
  out["closing_value"] = r.closing_value.str();
  out["twr"] = figure(r.twr);
  out["modified_dietz"] = figure(r.modified_dietz);
  out["mwr"] = {{"status", to_string(r.mwr.status)},
                {"annual_rate", opt(r.mwr.annual_rate)},
                {"period_rate", opt(r.mwr.period_rate)},
                {"roots", r.mwr.roots},
                {"flow_sign_changes", r.mwr.flow_sign_changes}};
  out["mwr_figure"] = figure(r.mwr_figure);
  json risk;
  risk["daily_volatility"] = opt(r.risk.daily_volatility);
  risk["daily_observations"] = r.risk.daily_observations;
  risk["monthly_volatility"] = opt(r.risk.monthly_volatility);
  risk["monthly_observations"] = r.risk.monthly_observations;
  risk["sharpe"] = opt(r.risk.sharpe);
  if (r.risk.max_drawdown) {
    const Drawdown& d = *r.risk.max_drawdown;
    risk["max_drawdown"] = {{"depth", d.depth},
                            {"peak", d.peak.str()},
                            {"trough", d.trough.str()},
                            {"recovery", d.recovery ? json(d.recovery->str()) : json(nullptr)}};
  } else {
    risk["max_drawdown"] = nullptr;
  }
  out["risk"] = risk;
  if (r.benchmark) {
    const BenchmarkFigures& b = *r.benchmark;
    out["benchmark"] = {{"return", figure(b.benchmark)},
                        {"excess_arithmetic", b.excess_arithmetic},
                        {"excess_geometric", b.excess_geometric},
                        {"excess_arithmetic_annualized", opt(b.excess_arithmetic_annualized)},
                        {"excess_geometric_annualized", opt(b.excess_geometric_annualized)},
                        {"tracking_error", opt(b.tracking_error)}};
  } else {
    out["benchmark"] = nullptr;
  }
  json months = json::array();
  for (const MonthRow& m : r.months) {
    months.push_back({{"month", fmt::format("{:04}-{:02}", m.year, m.month)},
                      {"first", m.first.str()},
                      {"last", m.last.str()},
                      {"complete", m.complete},
                      {"twr", m.twr},
                      {"modified_dietz", opt(m.modified_dietz)},
                      {"benchmark", opt(m.benchmark)}});
  }
  out["months"] = months;
  return out;
}

}  // namespace

int main(int argc, char** argv) {
  try {
    std::optional<std::string> series_path, benchmark_path, from, to, risk_free;
    for (int i = 1; i + 1 < argc; i += 2) {
      const std::string key = argv[i];
      const std::string value = argv[i + 1];
      if (key == "--series") {
        series_path = value;
      } else if (key == "--benchmark") {
        benchmark_path = value;
      } else if (key == "--from") {
        from = value;
      } else if (key == "--to") {
        to = value;
      } else if (key == "--risk-free") {
        risk_free = value;
      } else {
        throw keel::InputError(fmt::format("unknown option {}", key));
      }
    }
    if (!series_path || !from || !to)
      throw keel::InputError(
          "usage: perf_probe --series FILE --from DAY --to DAY "
          "[--benchmark FILE] [--risk-free RATE]");
    PerfInput in;
    in.from = Date::parse(*from);
    in.to = Date::parse(*to);
    for (const auto& row : read_csv(*series_path, 4)) {
      in.series.push_back({Date::parse(row[0]), Decimal::parse(row[1]), Decimal::parse(row[2]),
                           Decimal::parse(row[3])});
    }
    if (benchmark_path) {
      std::vector<LevelPoint> levels;
      for (const auto& row : read_csv(*benchmark_path, 2))
        levels.push_back({Date::parse(row[0]), Decimal::parse(row[1])});
      in.benchmark = levels;
    }
    if (risk_free) in.risk_free_annual = Decimal::parse(*risk_free);
    std::cout << to_json(measure(in)).dump(2) << "\n";
    return 0;
  } catch (const keel::InputError& e) {
    std::cerr << "perf_probe: " << e.what() << "\n";
    return keel::kExitInput;
  }
}
