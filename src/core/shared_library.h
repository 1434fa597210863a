// System libraries that only a few commands need, opened when first needed
// instead of at every start-up: libxlsxwriter (the statement's XLSX form) and
// OpenSSL's libcrypto (SHA-256 of imported files and rule texts). Linked into
// the program, each would cost every command its symbol lookups and
// relocations (libcrypto alone about 3,400 lookups and 17,000 relocations).
//
// Contract
//  - open_shared_library(soname, need) asks the system's loader for the
//    library by its SONAME (dlopen, RTLD_NOW | RTLD_LOCAL: the loader's own
//    search, LD_LIBRARY_PATH, ld.so.cache, then /lib and /usr/lib). It never
//    closes it: the handle stays valid for the rest of the run, and a second
//    call returns the same handle.
//  - library_function<F>(handle, soname, name, need) is the function `name`
//    of an opened library, typed F (decltype(&name) from the library's header,
//    so a call is checked against the header keel was built with).
//  - A table of a library's functions is a struct with one member per
//    function, named and typed as in the library's header, filled in once:
//      #define CRYPTO_FUNCTIONS(X) X(EVP_sha256) X(EVP_DigestUpdate)
//      struct Crypto { CRYPTO_FUNCTIONS(KEEL_LIBRARY_MEMBER) };
//      Crypto table; void* handle = open_shared_library(soname, need);
//      CRYPTO_FUNCTIONS(KEEL_LIBRARY_BIND)  // uses table, handle, soname, need
//  - Both throw InputError (exit 1) when the library cannot be loaded or
//    lacks the function: "<need> needs the shared library <soname>, which
//    cannot be loaded from LD_LIBRARY_PATH, /etc/ld.so.cache, /lib or
//    /usr/lib: <the loader's reason>", "<need>: <soname> has no function
//    <name>". `need` says what was asked ("--xlsx: writing XLSX").
//    Callers open the library before they write anything, so a refusal
//    changes nothing.
#pragma once

#include <string_view>

namespace keel {

void* open_shared_library(const char* soname, std::string_view need);
void* shared_library_symbol(void* handle, const char* soname, const char* name,
                            std::string_view need);

template <class F>
F library_function(void* handle, const char* soname, const char* name, std::string_view need) {
  return reinterpret_cast<F>(shared_library_symbol(handle, soname, name, need));
}

}  // namespace keel

// A member of a function table: the function `f` of the library's header.
#define KEEL_LIBRARY_MEMBER(f) decltype(&::f) f = nullptr;
// Fills member `f` of `table` from `handle` (with `soname` and `need` in scope).
#define KEEL_LIBRARY_BIND(f) \
  table.f = ::keel::library_function<decltype(&::f)>(handle, soname, #f, need);
