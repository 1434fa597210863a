// Memory policy of a short run that builds and drops many large vectors.
//
// Contract
//  - keep_freed_memory() tells the C library (glibc's malloc) to serve
//    blocks up to 64 MiB from its heap rather than from a mapping of their
//    own, and to keep up to 256 MiB of freed heap instead of handing it back
//    to the system. A block freed is then reused by the next one, instead of
//    being unmapped and faulted in again page by page (each new page costs a
//    fault and a zeroed page; a ledger report that builds a series, slices it
//    for several periods and copies books does so thousands of times).
//  - Peak memory stays the peak of what is live at once: only memory already
//    freed is kept, for this process's life. Meant for commands that run and
//    end (reports), called once before their work; never throws. A no-op
//    where the C library is not glibc.
#pragma once

#if defined(__GLIBC__)
#include <malloc.h>
#endif

namespace keel {

inline void keep_freed_memory() {
#if defined(__GLIBC__)
  mallopt(M_MMAP_THRESHOLD, 64 << 20);
  mallopt(M_TRIM_THRESHOLD, 256 << 20);
#endif
}

}  // namespace keel
