// tests/config/config_text.h
// Config texts shared by the config tests, and a helper that returns a parse error's message.
#pragma once

#include <string>

#include "config/config.h"

namespace ampledger::testing {

// A fake node key, made up for tests; never used on a real node.
inline const std::string kTestKeyHex =
    "000102030405060708090a0b0c0d0e0f101112131415161718191a1b1c1d1e1f";

// The smallest valid file: 16 lines, so text appended to it starts on line 17.
inline const std::string kMinimalConfig =
    "[site]\n"                                // 1
    "name = \"Test house\"\n"                 // 2
    "time_zone = \"Europe/Paris\"\n"          // 3
    "nominal_volts = [230]\n"                 // 4
    "\n"                                      // 5
    "[[node]]\n"                              // 6
    "id = \"n1\"\n"                           // 7
    "key = \"" + kTestKeyHex + "\"\n"         // 8
    "[[node.channel]]\n"                      // 9
    "id = \"ct1\"\n"                          // 10
    "[[node.channel]]\n"                      // 11
    "id = \"ct2\"\n"                          // 12
    "\n"                                      // 13
    "[[circuit]]\n"                           // 14
    "id = \"c1\"\n"                           // 15
    "channels = [\"n1/ct1\"]\n";              // 16

// The message of the error ParseConfig gives for `text` named "site.toml", or "OK" when it
// loads.
inline std::string ErrorOf(const std::string& text) {
  Result<Config> config = ParseConfig(text, "site.toml");
  return config.ok() ? "OK" : config.status().message();
}

}  // namespace ampledger::testing
