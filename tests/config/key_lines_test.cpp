// tests/config/key_lines_test.cpp
#include "config/key_lines.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

TEST_SUITE("config") {

TEST_CASE("KeyLines falls back to the closest recorded parent") {
  KeyLines lines("site.toml");
  lines.Set("circuit[2]", 30);
  lines.Set("circuit[2].channels", 32);
  lines.Set("circuit[2].channels[1]", 33);
  CHECK(lines.LineOf("circuit[2].channels[1]") == 33);
  CHECK(lines.LineOf("circuit[2].channels[5]") == 32);
  CHECK(lines.LineOf("circuit[2].name") == 30);
  CHECK(lines.LineOf("circuit[3].name") == 0);
  CHECK(lines.Error("circuit[2].channels[1]", "no node \"garage\"").message() ==
        "site.toml:33: circuit[2].channels[1]: no node \"garage\"");
  CHECK(lines.Error("site", "missing").message() == "site.toml: site: missing");
  CHECK(lines.Error("site", "missing").code() == StatusCode::kInvalidArgument);
}

TEST_CASE("KeyLines::Format leaves out an unknown line and an empty path") {
  CHECK(KeyLines::Format("a.toml", 4, "log.level", "bad") == "a.toml:4: log.level: bad");
  CHECK(KeyLines::Format("a.toml", 0, "site", "missing") == "a.toml: site: missing");
  CHECK(KeyLines::Format("a.toml", 2, "", "TOML syntax: x") == "a.toml:2: TOML syntax: x");
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
