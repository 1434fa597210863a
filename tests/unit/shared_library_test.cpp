// core/shared_library.h: opening a system library by its SONAME when first needed.
#include "core/shared_library.h"

#include <doctest/doctest.h>

#include <cstring>

#include "core/error.h"

using namespace keel;

TEST_CASE("shared library: one that cannot be found is refused, naming it and what needed it") {
  // The loader's reason is glibc's own text for a file it cannot find.
  CHECK_THROWS_WITH_AS(open_shared_library("libkeel-absent.so.9", "--out: writing"),
                       "--out: writing needs the shared library libkeel-absent.so.9, which cannot "
                       "be loaded from LD_LIBRARY_PATH, /etc/ld.so.cache, /lib or /usr/lib: "
                       "libkeel-absent.so.9: cannot open shared object file: No such file or "
                       "directory",
                       InputError);
}

TEST_CASE("shared library: a function it lacks is refused, naming it") {
  void* handle = open_shared_library("libc.so.6", "counting");
  CHECK_THROWS_WITH_AS(shared_library_symbol(handle, "libc.so.6", "keel_absent", "counting"),
                       "counting: libc.so.6 has no function keel_absent", InputError);
}

TEST_CASE("shared library: a function it has is the library's own") {
  void* handle = open_shared_library("libc.so.6", "measuring");
  const auto length =
      library_function<decltype(&std::strlen)>(handle, "libc.so.6", "strlen", "measuring");
  CHECK(length("lot") == 3);
  CHECK(open_shared_library("libc.so.6", "measuring") == handle);
}
