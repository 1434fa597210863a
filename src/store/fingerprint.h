// A canonical text dump of every table's rows, for proving that a refused
// change left the ledger exactly as it was (tests, `keel verify`).
#pragma once

#include <string>

#include "store/database.h"

namespace keel::store {

std::string content_dump(Database& db);

}  // namespace keel::store
