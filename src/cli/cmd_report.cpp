// Commands that read the ledger and print: holdings, lots, history, gains, lists.
#include <fmt/format.h>

#include "cli/context.h"

namespace keel::cli {

void register_report_commands(CLI::App& /*app*/, Context& /*ctx*/) {}

}  // namespace keel::cli
