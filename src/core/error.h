// Errors keel reports to a person.
//
//  - InputError: something the user supplied is wrong (a value, a file line,
//    an option, an impossible trade). The message is complete and ready to
//    print; the command exits with kExitInput and the ledger is unchanged.
//  - LedgerError: the ledger file itself cannot be used (newer schema, busy,
//    unsafe permissions). Exits with kExitLedger.
// Anything else escaping to main() is a bug and exits with kExitInternal.
#pragma once

#include <stdexcept>
#include <string>

namespace keel {

inline constexpr int kExitInput = 1;
inline constexpr int kExitUsage = 2;  // command-line syntax (CLI11)
inline constexpr int kExitLedger = 3;
inline constexpr int kExitInternal = 70;

class InputError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

class LedgerError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace keel
