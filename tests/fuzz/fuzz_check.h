// Shared by the fuzz targets: a failed invariant aborts with a message, so
// libFuzzer records the input as a crash. Only for tests/fuzz.
#pragma once

#include <cstdio>
#include <cstdlib>

#define KEEL_FUZZ_CHECK(cond)                                                            \
  do {                                                                                   \
    if (!(cond)) {                                                                       \
      std::fprintf(stderr, "invariant failed: %s (%s:%d)\n", #cond, __FILE__, __LINE__); \
      std::abort();                                                                      \
    }                                                                                    \
  } while (0)
