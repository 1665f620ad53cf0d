#include <catch2/catch.hpp>

#include "temp_folder.hpp"
#include "util/sha256.hpp"

TEST_CASE("SHA-256 matches the FIPS 180-4 worked examples") {
  // NIST FIPS 180-4 example messages (published; digests from the standard's examples).
  CHECK(tinct::sha256_hex("abc") ==
        "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  CHECK(tinct::sha256_hex("") ==
        "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
  CHECK(tinct::sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq") ==
        "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
}

TEST_CASE("SHA-256 of a file equals that of its bytes, across block boundaries") {
  tinct::testing::TempFolder folder;
  const std::string bytes(200000, 'a');
  const auto file = folder.write("a.bin", bytes);
  CHECK(tinct::sha256_file(file) == tinct::sha256_hex(bytes));
  // One million 'a' (FIPS 180-4 long-message example, published).
  CHECK(tinct::sha256_hex(std::string(1000000, 'a')) ==
        "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
}
