#include "io/sha256.h"

#include <fmt/format.h>
#include <openssl/evp.h>

#include <array>
#include <fstream>
#include <stdexcept>

#include "core/error.h"
#include "core/files.h"
#include "core/text.h"

namespace keel::io {

struct Sha256::Context {
  EVP_MD_CTX* md = EVP_MD_CTX_new();
  ~Context() { EVP_MD_CTX_free(md); }
};

namespace {

void check(int ok, const char* what) {
  if (ok != 1) throw std::runtime_error(std::string("SHA-256: libcrypto failed in ") + what);
}

}  // namespace

Sha256::Sha256() : ctx_(std::make_unique<Context>()) {
  if (!ctx_->md) throw std::runtime_error("SHA-256: libcrypto has no digest context");
  check(EVP_DigestInit_ex(ctx_->md, EVP_sha256(), nullptr), "EVP_DigestInit_ex");
}

Sha256::~Sha256() = default;

void Sha256::update(const void* data, std::size_t size) {
  check(EVP_DigestUpdate(ctx_->md, data, size), "EVP_DigestUpdate");
}

std::string Sha256::hex() {
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned int length = 0;
  check(EVP_DigestFinal_ex(ctx_->md, digest, &length), "EVP_DigestFinal_ex");
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
