// The demo scenario compiled into keel: the files of examples/demo/data and
// examples/demo/rule.toml, byte for byte, so `keel demo` runs wherever the
// binary is, with no source tree or data folder at hand.
#pragma once

#include <string_view>
#include <vector>

namespace keel::io {

struct EmbeddedFile {
  std::string_view name;  // file name, e.g. "prices.csv"
  std::string_view text;  // its bytes
};

// Every embedded file: the data files by name, then rule.toml.
const std::vector<EmbeddedFile>& embedded_demo_files();

}  // namespace keel::io
