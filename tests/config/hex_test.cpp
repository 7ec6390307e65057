// tests/config/hex_test.cpp
#include "config/hex.h"

#include <doctest/doctest.h>

#include "tests/config/config_text.h"

namespace ampledger {
namespace {

TEST_SUITE("config") {

TEST_CASE("DecodeHexKey reads 32 bytes, either case") {
  std::vector<std::uint8_t> key;
  std::string why;
  REQUIRE(DecodeHexKey(testing::kTestKeyHex, false, &key, &why));
  REQUIRE(key.size() == 32);
  CHECK(key[0] == 0x00);
  CHECK(key[10] == 0x0a);
  CHECK(key[31] == 0x1f);
  REQUIRE(DecodeHexKey("FF" + testing::kTestKeyHex.substr(2), false, &key, &why));
  CHECK(key[0] == 0xff);
}

TEST_CASE("DecodeHexKey skips whitespace only when asked") {
  const std::string spaced = " " + testing::kTestKeyHex.substr(0, 32) + "\r\n\t" +
                             testing::kTestKeyHex.substr(32) + "\n";
  std::vector<std::uint8_t> key;
  std::string why;
  CHECK(DecodeHexKey(spaced, true, &key, &why));
  CHECK(key.size() == 32);
  CHECK(!DecodeHexKey(spaced, false, &key, &why));
  CHECK(why == "expected 64 hex digits (a 32-byte key), but character 1 is not a hex digit");
}

TEST_CASE("DecodeHexKey says what is wrong without repeating the key") {
  std::vector<std::uint8_t> key = {1, 2, 3};
  std::string why;
  CHECK(!DecodeHexKey("", false, &key, &why));
  CHECK(why == "expected 64 hex digits (a 32-byte key), got 0");
  CHECK(!DecodeHexKey(testing::kTestKeyHex + "00", false, &key, &why));
  CHECK(why == "expected 64 hex digits (a 32-byte key), got 66");
  CHECK(!DecodeHexKey("0x" + testing::kTestKeyHex.substr(2), false, &key, &why));
  CHECK(why == "expected 64 hex digits (a 32-byte key), but character 2 is not a hex digit");
  CHECK(key == std::vector<std::uint8_t>{1, 2, 3});  // untouched on failure
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
