// overfit_probe: test-only driver for perf/overfit.h. Reads a JSON document
// {"columns": [[r, ...], ...], "blocks": S} from standard input (N columns of
// T returns; S = 0: no PBO) and prints, as JSON: each column's Sharpe ratio and moments, the
// deflated Sharpe ratio of the column with the highest Sharpe ratio (the
// first on ties) against all defined ones, and the PBO with S blocks (null
// where a figure is undefined), so that a reference script can compare.
#include <iostream>
#include <nlohmann/json.hpp>
#include <optional>
#include <vector>

#include "perf/overfit.h"

using nlohmann::json;
using namespace keel::perf;

namespace {

json opt(const std::optional<double>& x) {
  return x ? json(*x) : json(nullptr);
}

}  // namespace

int main() {
  const json in = json::parse(std::cin);
  const auto columns = in.at("columns").get<std::vector<std::vector<double>>>();
  json out;
  std::vector<double> defined;
  std::optional<std::size_t> best;
  for (std::size_t j = 0; j < columns.size(); ++j) {
    const auto sr = sharpe_ratio(columns[j]);
    const auto m = moments(columns[j]);
    out["sharpe"].push_back(opt(sr));
    out["skew"].push_back(opt(m.skew));
    out["kurtosis"].push_back(opt(m.kurtosis));
    if (!sr) continue;
    defined.push_back(*sr);
    if (!best || *sr > *sharpe_ratio(columns[*best])) best = j;
  }
  out["best"] = best ? json(*best) : json(nullptr);
  out["dsr"] = nullptr;
  if (best) {
    if (const auto d = deflated_sharpe(columns[*best], defined))
      out["dsr"] = {{"sharpe", d->sharpe},
                    {"trials", d->trials},
                    {"trials_variance", d->trials_variance},
                    {"expected_max", d->expected_max},
                    {"probability", d->probability}};
  }
  const int blocks = in.at("blocks").get<int>();
  out["pbo_blocks_for_rows"] = pbo_blocks(static_cast<int>(columns.front().size()));
  if (columns.size() >= 2 && blocks > 0) {
    const Pbo p = pbo(columns, blocks);
    out["pbo"] = {{"blocks", p.blocks},
                  {"rows_used", p.rows_used},
                  {"combinations", p.combinations},
                  {"probability", p.probability},
                  {"logits", p.logits}};
  } else {
    out["pbo"] = nullptr;
  }
  std::cout << out.dump() << '\n';
}
