// The interface between keel and its OFX module, keel-ofx.so: the one part
// of reading an OFX statement that calls libofx (and, through it, the SGML
// parser libosp). Those libraries are large; kept in a module loaded only
// when an OFX file is read, they cost no other command its start-up.
//
// Contract
//  - keel_ofx_read_v1(file, callbacks) runs libofx over the file with its
//    console messages off, hands every account, statement, security,
//    transaction and position to the callbacks in libofx's own structures
//    (from the headers keel was built with), and returns what
//    libofx_proc_file returned. It throws nothing of its own.
//  - The entry point is a C function whose name carries this interface's
//    version (kOfxModuleEntry): a change to the callbacks or to what they
//    receive takes a new name, so a module from another build of keel is
//    refused by name rather than called with another layout.
//  - io/ofx.h says where keel looks for the module. The unit tests and fuzz
//    targets link ofx_module/libofx_reader.cpp into themselves instead.
#pragma once

#include <libofx/libofx.h>

extern "C" {

struct KeelOfxCallbacks {
  LibofxProcAccountCallback account;
  LibofxProcStatementCallback statement;
  LibofxProcSecurityCallback security;
  LibofxProcTransactionCallback transaction;
  LibofxProcPositionCallback position;
  void* data;  // passed to each callback
};

typedef int (*KeelOfxRead)(const char* file, const KeelOfxCallbacks* callbacks);

int keel_ofx_read_v1(const char* file, const KeelOfxCallbacks* callbacks);
}

namespace keel::io {
inline constexpr const char* kOfxModuleEntry = "keel_ofx_read_v1";
inline constexpr const char* kOfxModuleFile = "keel-ofx.so";
}  // namespace keel::io
