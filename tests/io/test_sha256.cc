#include "io/sha256.h"

#include <doctest/doctest.h>

#include <string>

#include "lti/error.h"
#include "tests/io/temp_dir.h"

// Example digests from FIPS 180-2, Appendix B (SHA-256 examples B.1, B.2, B.3).
TEST_CASE("SHA-256 of the FIPS 180-2 example messages") {
  CHECK(lw::Sha256Hex("abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  CHECK(lw::Sha256Hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq") ==
        "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
  CHECK(lw::Sha256Hex(std::string(1000000, 'a')) ==
        "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
}

TEST_CASE("SHA-256 of a file equals that of its bytes, across read chunks") {
  lw::test::TempDir dir;
  const std::string path = dir.File("a.bin");
  // The FIPS 180-2 B.3 message as a file, then 2.5 MiB (more than one 1 MiB read chunk).
  lw::test::WriteText(path, std::string(1000000, 'a'));
  CHECK(lw::Sha256OfFile(path) ==
        "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
  std::string mixed;
  for (int i = 0; i < 2621440; ++i) mixed.push_back(static_cast<char>((i * 131) % 251));
  lw::test::WriteText(path, mixed);
  CHECK(lw::Sha256OfFile(path) == lw::Sha256Hex(mixed));
  CHECK_THROWS_AS(lw::Sha256OfFile(dir.File("missing.bin")), lw::DataError);
}
