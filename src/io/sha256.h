// SHA-256 (FIPS 180-4), incremental: update() any number of times, then
// hex() once for the lowercase hexadecimal digest. The digest is OpenSSL's
// libcrypto (Debian's libssl-dev), which uses the processor's SHA
// extensions where it has them. It is opened on the first digest of a run
// (core/shared_library.h), so commands that take no digest do not load it.
// The first Sha256 throws InputError when libcrypto cannot be loaded;
// otherwise only std::runtime_error if libcrypto fails, which it does not for
// a digest in memory.
#pragma once

#include <cstddef>
#include <filesystem>
#include <memory>
#include <string>
#include <string_view>

namespace keel::io {

class Sha256 {
 public:
  Sha256();
  ~Sha256();
  Sha256(const Sha256&) = delete;
  Sha256& operator=(const Sha256&) = delete;
  void update(const void* data, std::size_t size);
  void update(std::string_view text) { update(text.data(), text.size()); }
  std::string hex();  // finishes the digest; call once

 private:
  struct Context;
  std::unique_ptr<Context> ctx_;
};

std::string sha256_hex(std::string_view text);
// The digest of a whole file; throws InputError naming it when it cannot be read.
std::string sha256_file_hex(const std::filesystem::path& file);

}  // namespace keel::io
