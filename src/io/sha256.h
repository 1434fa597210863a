// SHA-256 (FIPS 180-4, section 6.2), incremental: update() any number of
// times, then hex() once for the lowercase hexadecimal digest.
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <string>
#include <string_view>

namespace keel::io {

class Sha256 {
 public:
  Sha256();
  void update(const void* data, std::size_t size);
  void update(std::string_view text) { update(text.data(), text.size()); }
  std::string hex();  // finishes the digest; call once

 private:
  void block(const unsigned char* p);
  std::array<std::uint32_t, 8> h_;
  std::array<unsigned char, 64> buf_{};
  std::size_t buffered_ = 0;
  std::uint64_t total_ = 0;
};

std::string sha256_hex(std::string_view text);
// The digest of a whole file; throws InputError naming it when it cannot be read.
std::string sha256_file_hex(const std::filesystem::path& file);

}  // namespace keel::io
