#include "io/sha256.h"

#include <fmt/format.h>

#include <cstring>
#include <fstream>

#include "core/error.h"
#include "core/files.h"
#include "core/text.h"

namespace keel::io {
namespace {

// FIPS 180-4 section 4.2.2: the first 32 bits of the fractional parts of the
// cube roots of the first 64 primes.
constexpr std::uint32_t kK[64] = {
    0x428a2f98, 0x71374491, 0xb5c0fbcf, 0xe9b5dba5, 0x3956c25b, 0x59f111f1, 0x923f82a4, 0xab1c5ed5,
    0xd807aa98, 0x12835b01, 0x243185be, 0x550c7dc3, 0x72be5d74, 0x80deb1fe, 0x9bdc06a7, 0xc19bf174,
    0xe49b69c1, 0xefbe4786, 0x0fc19dc6, 0x240ca1cc, 0x2de92c6f, 0x4a7484aa, 0x5cb0a9dc, 0x76f988da,
    0x983e5152, 0xa831c66d, 0xb00327c8, 0xbf597fc7, 0xc6e00bf3, 0xd5a79147, 0x06ca6351, 0x14292967,
    0x27b70a85, 0x2e1b2138, 0x4d2c6dfc, 0x53380d13, 0x650a7354, 0x766a0abb, 0x81c2c92e, 0x92722c85,
    0xa2bfe8a1, 0xa81a664b, 0xc24b8b70, 0xc76c51a3, 0xd192e819, 0xd6990624, 0xf40e3585, 0x106aa070,
    0x19a4c116, 0x1e376c08, 0x2748774c, 0x34b0bcb5, 0x391c0cb3, 0x4ed8aa4a, 0x5b9cca4f, 0x682e6ff3,
    0x748f82ee, 0x78a5636f, 0x84c87814, 0x8cc70208, 0x90befffa, 0xa4506ceb, 0xbef9a3f7, 0xc67178f2};

constexpr std::uint32_t rotr(std::uint32_t x, int n) {
  return (x >> n) | (x << (32 - n));
}

}  // namespace

Sha256::Sha256()
    // FIPS 180-4 section 5.3.3: initial hash value.
    : h_{0x6a09e667, 0xbb67ae85, 0x3c6ef372, 0xa54ff53a,
         0x510e527f, 0x9b05688c, 0x1f83d9ab, 0x5be0cd19} {}

void Sha256::block(const unsigned char* p) {
  std::uint32_t w[64];
  for (int t = 0; t < 16; ++t)
    w[t] = (std::uint32_t{p[4 * t]} << 24) | (std::uint32_t{p[4 * t + 1]} << 16) |
           (std::uint32_t{p[4 * t + 2]} << 8) | std::uint32_t{p[4 * t + 3]};
  for (int t = 16; t < 64; ++t) {
    const std::uint32_t s0 = rotr(w[t - 15], 7) ^ rotr(w[t - 15], 18) ^ (w[t - 15] >> 3);
    const std::uint32_t s1 = rotr(w[t - 2], 17) ^ rotr(w[t - 2], 19) ^ (w[t - 2] >> 10);
    w[t] = w[t - 16] + s0 + w[t - 7] + s1;
  }
  std::uint32_t a = h_[0], b = h_[1], c = h_[2], d = h_[3], e = h_[4], f = h_[5], g = h_[6],
                h = h_[7];
  for (int t = 0; t < 64; ++t) {
    const std::uint32_t t1 =
        h + (rotr(e, 6) ^ rotr(e, 11) ^ rotr(e, 25)) + ((e & f) ^ (~e & g)) + kK[t] + w[t];
    const std::uint32_t t2 =
        (rotr(a, 2) ^ rotr(a, 13) ^ rotr(a, 22)) + ((a & b) ^ (a & c) ^ (b & c));
    h = g;
    g = f;
    f = e;
    e = d + t1;
    d = c;
    c = b;
    b = a;
    a = t1 + t2;
  }
  h_[0] += a;
  h_[1] += b;
  h_[2] += c;
  h_[3] += d;
  h_[4] += e;
  h_[5] += f;
  h_[6] += g;
  h_[7] += h;
}

void Sha256::update(const void* data, std::size_t size) {
  // An empty input may come with a null pointer, which memcpy must not see.
  if (size == 0) return;
  const auto* p = static_cast<const unsigned char*>(data);
  total_ += size;
  if (buffered_ > 0) {
    const std::size_t take = std::min(size, 64 - buffered_);
    std::memcpy(buf_.data() + buffered_, p, take);
    buffered_ += take;
    p += take;
    size -= take;
    if (buffered_ < 64) return;
    block(buf_.data());
    buffered_ = 0;
  }
  for (; size >= 64; p += 64, size -= 64) block(p);
  std::memcpy(buf_.data(), p, size);
  buffered_ = size;
}

std::string Sha256::hex() {
  // FIPS 180-4 section 5.1.1: a 1 bit, zeros, then the length in bits.
  const std::uint64_t bits = total_ * 8;
  const unsigned char one = 0x80;
  const unsigned char zero = 0;
  update(&one, 1);
  while (buffered_ != 56) update(&zero, 1);
  unsigned char len[8];
  for (int i = 0; i < 8; ++i) len[i] = static_cast<unsigned char>(bits >> (56 - 8 * i));
  update(len, 8);
  static constexpr char kHex[] = "0123456789abcdef";
  std::string out;
  for (std::uint32_t v : h_)
    for (int shift = 28; shift >= 0; shift -= 4) out.push_back(kHex[(v >> shift) & 0xF]);
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
