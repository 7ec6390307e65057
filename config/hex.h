// config/hex.h
// Decoding of node keys written as hexadecimal. A node key is 32 bytes = 64 hex digits. Error
// texts describe the input's shape (length, position of a bad character) and never echo it,
// because it is a secret. Pure functions; any thread.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace ampledger {

constexpr int kNodeKeyBytes = 32;

// Decodes exactly kNodeKeyBytes from `text` (upper or lower case hex digits). With
// `skip_whitespace`, spaces, tabs and line breaks anywhere are ignored (key files). On failure
// returns false and sets *why, e.g. "expected 64 hex digits (a 32-byte key), got 62".
bool DecodeHexKey(std::string_view text, bool skip_whitespace, std::vector<std::uint8_t>* key,
                  std::string* why);

}  // namespace ampledger
