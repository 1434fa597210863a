#include "io/sha256.h"

#include <fmt/format.h>
#include <openssl/evp.h>

#include <array>
#include <fstream>
#include <stdexcept>

#include "core/error.h"
#include "core/files.h"
#include "core/shared_library.h"
#include "core/text.h"

#ifndef KEEL_LIBCRYPTO_SONAME
#error "KEEL_LIBCRYPTO_SONAME: the SONAME of the libcrypto keel was built with (CMakeLists.txt)"
#endif
static_assert(sizeof(KEEL_LIBCRYPTO_SONAME) > 1, "KEEL_LIBCRYPTO_SONAME is empty");

namespace keel::io {
namespace {

// The few functions of libcrypto a digest uses, typed from <openssl/evp.h>.
// clang-format off
#define KEEL_CRYPTO_FUNCTIONS(X)                                                                   \
  X(EVP_MD_CTX_new) X(EVP_MD_CTX_free) X(EVP_sha256) X(EVP_DigestInit_ex) X(EVP_DigestUpdate)      \
  X(EVP_DigestFinal_ex)
// clang-format on

struct Crypto {
  KEEL_CRYPTO_FUNCTIONS(KEEL_LIBRARY_MEMBER)
};

// libcrypto, opened on the first digest of the run (core/shared_library.h).
const Crypto& crypto() {
  static const Crypto loaded = [] {
    constexpr const char* soname = KEEL_LIBCRYPTO_SONAME;
    constexpr std::string_view need = "computing a SHA-256 digest";
    Crypto table;
    void* handle = open_shared_library(soname, need);
    KEEL_CRYPTO_FUNCTIONS(KEEL_LIBRARY_BIND)
    return table;
  }();
  return loaded;
}

}  // namespace

struct Sha256::Context {
  const Crypto& c = crypto();
  EVP_MD_CTX* md = c.EVP_MD_CTX_new();
  ~Context() { c.EVP_MD_CTX_free(md); }
};

namespace {

void check(int ok, const char* what) {
  if (ok != 1) throw std::runtime_error(std::string("SHA-256: libcrypto failed in ") + what);
}

}  // namespace

Sha256::Sha256() : ctx_(std::make_unique<Context>()) {
  if (!ctx_->md) throw std::runtime_error("SHA-256: libcrypto has no digest context");
  check(ctx_->c.EVP_DigestInit_ex(ctx_->md, ctx_->c.EVP_sha256(), nullptr), "EVP_DigestInit_ex");
}

Sha256::~Sha256() = default;

void Sha256::update(const void* data, std::size_t size) {
  check(ctx_->c.EVP_DigestUpdate(ctx_->md, data, size), "EVP_DigestUpdate");
}

std::string Sha256::hex() {
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned int length = 0;
  check(ctx_->c.EVP_DigestFinal_ex(ctx_->md, digest, &length), "EVP_DigestFinal_ex");
  static const char kHex[] = "0123456789abcdef";
  std::string out;
  out.reserve(2 * length);
  for (unsigned int i = 0; i < length; ++i) {
    out += kHex[digest[i] >> 4];
    out += kHex[digest[i] & 15];
  }
  return out;
}

std::string sha256_hex(std::string_view text) {
  Sha256 s;
  s.update(text);
  return s.hex();
}

std::string sha256_file_hex(const std::filesystem::path& file) {
  if (is_standard_input(file)) return sha256_hex(standard_input_text());
  std::ifstream in(file, std::ios::binary);
  if (!in) throw InputError(fmt::format("{}: cannot open", printable(file.string())));
  Sha256 sha;
  std::array<char, 1 << 16> buf{};
  while (in.read(buf.data(), buf.size()) || in.gcount() > 0)
    sha.update(buf.data(), static_cast<std::size_t>(in.gcount()));
  return sha.hex();
}

}  // namespace keel::io
