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
//  - It also grows the heap at once by 64 MiB of address space (no memory is
//    touched, so none is resident yet) and asks the kernel for transparent
//    huge pages on it (where they are given on request, "madvise" mode): the
//    heap then fills 2 MiB at a time, one fault each, instead of 4 KiB.
//  - Peak memory stays about the peak of what is live at once (at most one
//    partly used 2 MiB page more per region touched): only memory already
//    freed is kept, for this process's life. Meant for commands that run and
//    end (reports), called once before their work; never throws. Advice only:
//    a kernel without huge pages leaves 4 KiB pages; a no-op where the C
//    library is not glibc.
#pragma once

#if defined(__GLIBC__)
#include <malloc.h>
#include <sys/mman.h>
#include <unistd.h>

#include <cstdint>
#include <cstdlib>
#endif

namespace keel {

inline void keep_freed_memory() {
#if defined(__GLIBC__)
  constexpr int kPad = 64 << 20;
  mallopt(M_MMAP_THRESHOLD, kPad);
  mallopt(M_TRIM_THRESHOLD, 4 * kPad);
  mallopt(M_TOP_PAD, kPad);
  // One block from the heap (below the threshold) makes it grow by the pad;
  // freed, it stays there (below the trim threshold) for what comes next.
  const auto before = reinterpret_cast<std::uintptr_t>(sbrk(0));
  void* volatile block = std::malloc(8 << 20);
  std::free(block);
  const auto after = reinterpret_cast<std::uintptr_t>(sbrk(0));
  constexpr std::uintptr_t kHuge = std::uintptr_t{2} << 20;
  const std::uintptr_t first = (before + kHuge - 1) & ~(kHuge - 1);
  const std::uintptr_t last = after & ~(kHuge - 1);
  if (last > first) madvise(reinterpret_cast<void*>(first), last - first, MADV_HUGEPAGE);
#endif
}

}  // namespace keel
