#include "core/shared_library.h"

#include <dlfcn.h>
#include <fmt/format.h>

#include "core/error.h"
#include "core/text.h"

namespace keel {

void* open_shared_library(const char* soname, std::string_view need) {
  // The loader counts references: a second dlopen of an open library returns
  // its handle without searching again.
  void* handle = dlopen(soname, RTLD_NOW | RTLD_LOCAL);
  if (!handle) {
    const char* why = dlerror();
    throw InputError(
        fmt::format("{} needs the shared library {}, which cannot be loaded from LD_LIBRARY_PATH, "
                    "/etc/ld.so.cache, /lib or /usr/lib: {}",
                    need, soname, printable(why ? why : "no reason given")));
  }
  return handle;
}

void* shared_library_symbol(void* handle, const char* soname, const char* name,
                            std::string_view need) {
  dlerror();
  void* symbol = dlsym(handle, name);
  if (!symbol) throw InputError(fmt::format("{}: {} has no function {}", need, soname, name));
  return symbol;
}

}  // namespace keel
