// SHA-256 against the test vectors published with FIPS 180-2 / NIST's
// "Cryptographic Standards and Guidelines: Examples" (digests from memory of
// those documents; the million-'a' vector is the standard long-message one).
#include "io/sha256.h"

#include <doctest/doctest.h>

#include <string>

using keel::io::sha256_hex;

TEST_CASE("SHA-256 of the empty message") {
  CHECK(sha256_hex("") == "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
}

TEST_CASE("SHA-256 of 'abc' (FIPS 180-2 appendix B.1)") {
  CHECK(sha256_hex("abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
}

TEST_CASE("SHA-256 of the 448-bit two-block message (FIPS 180-2 appendix B.2)") {
  CHECK(sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq") ==
        "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
}

TEST_CASE("SHA-256 of one million 'a' fed in uneven pieces (FIPS 180-2 appendix B.3)") {
  keel::io::Sha256 s;
  const std::string piece(997, 'a');
  std::size_t left = 1000000;
  while (left > 0) {
    const std::size_t n = std::min(left, piece.size());
    s.update(piece.data(), n);
    left -= n;
  }
  CHECK(s.hex() == "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
}
