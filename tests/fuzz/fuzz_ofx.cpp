// Fuzz target: OFX investment statements, through keel's well-formedness
// scan and libofx.
//
// Invariants: read_ofx() either gives a statement or throws InputError whose
// message starts with the file's name; a statement's transactions each have
// a FITID and a line inside the file, and are in file order.
#include <unistd.h>

#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

#include "core/error.h"
#include "fuzz_check.h"
#include "io/ofx.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  // libofx reads files, not buffers: one scratch file per process, removed
  // when the fuzzer exits.
  struct Scratch {
    std::string path = "/tmp/keel-fuzz-ofx-" + std::to_string(::getpid()) + ".ofx";
    ~Scratch() { std::remove(path.c_str()); }
  };
  static const Scratch scratch;
  const std::string& path = scratch.path;
  std::FILE* f = std::fopen(path.c_str(), "wb");
  KEEL_FUZZ_CHECK(f != nullptr);
  if (size > 0) KEEL_FUZZ_CHECK(std::fwrite(data, 1, size, f) == size);
  std::fclose(f);
  std::uint64_t lines = 1;
  for (std::size_t i = 0; i < size; ++i) lines += data[i] == '\n';
  try {
    const keel::io::OfxStatement st = keel::io::read_ofx(path);
    std::uint64_t previous = 0;
    for (const auto& t : st.transactions) {
      KEEL_FUZZ_CHECK(!t.fitid.empty());
      KEEL_FUZZ_CHECK(t.line >= 1 && t.line <= lines);
      KEEL_FUZZ_CHECK(t.line >= previous);
      previous = t.line;
    }
    for (const auto& p : st.positions) KEEL_FUZZ_CHECK(p.line <= lines);
  } catch (const keel::InputError& e) {
    KEEL_FUZZ_CHECK(std::string(e.what()).rfind(path, 0) == 0);
  }
  return 0;
}
