// tests/config/listen_address_test.cpp
#include <doctest/doctest.h>

#include "config/config.h"

namespace ampledger {
namespace {

std::string ErrorOf(std::string_view text) {
  Result<ListenAddress> address = ParseListenAddress(text);
  return address.ok() ? "OK" : address.status().message();
}

TEST_SUITE("config") {

TEST_CASE("ParseListenAddress splits host and port") {
  Result<ListenAddress> v4 = ParseListenAddress("127.0.0.1:8417");
  REQUIRE(v4.ok());
  CHECK(v4->host == "127.0.0.1");
  CHECK(v4->port == 8417);
  Result<ListenAddress> v6 = ParseListenAddress("[::1]:4717");
  REQUIRE(v6.ok());
  CHECK(v6->host == "::1");
  CHECK(v6->port == 4717);
  Result<ListenAddress> name = ParseListenAddress("ampledger.local:0");
  REQUIRE(name.ok());
  CHECK(name->host == "ampledger.local");
  CHECK(name->port == 0);
  CHECK(ErrorOf("0.0.0.0:65535") == "OK");
  CHECK(ErrorOf("[::]:1") == "OK");
}

TEST_CASE("ParseListenAddress refuses what is not host:port") {
  const std::string expected =
      "expected \"host:port\" or \"[IPv6]:port\" with a port from 0 to 65535, got ";
  CHECK(ErrorOf("8417") == expected + "\"8417\"");
  CHECK(ErrorOf(":8417") == expected + "\":8417\"");
  CHECK(ErrorOf("localhost:") == expected + "\"localhost:\"");
  CHECK(ErrorOf("localhost:65536") == expected + "\"localhost:65536\"");
  CHECK(ErrorOf("localhost:80a") == expected + "\"localhost:80a\"");
  CHECK(ErrorOf("::1:8417") == expected + "\"::1:8417\"");  // IPv6 needs brackets
  CHECK(ErrorOf("[::1]8417") == expected + "\"[::1]8417\"");
  CHECK(ErrorOf("[::g]:1") == "\"::g\" is not an IPv6 address; " + expected + "\"[::g]:1\"");
  CHECK(ErrorOf("256.0.0.1:1") ==
        "\"256.0.0.1\" is not an IPv4 address; " + expected + "\"256.0.0.1:1\"");
  CHECK(ErrorOf("my host:1") == expected + "\"my host:1\"");
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
