// config/hex.cpp
#include "config/hex.h"

namespace ampledger {

namespace {

int HexValue(char c) {
  if (c >= '0' && c <= '9') return c - '0';
  if (c >= 'a' && c <= 'f') return c - 'a' + 10;
  if (c >= 'A' && c <= 'F') return c - 'A' + 10;
  return -1;
}

bool IsSpace(char c) {
  return c == ' ' || c == '\t' || c == '\n' || c == '\r';
}

}  // namespace

bool DecodeHexKey(std::string_view text, bool skip_whitespace, std::vector<std::uint8_t>* key,
                  std::string* why) {
  const std::string expected = "expected " + std::to_string(2 * kNodeKeyBytes) + " hex digits (a " +
                               std::to_string(kNodeKeyBytes) + "-byte key)";
  std::vector<int> digits;
  for (size_t i = 0; i < text.size(); ++i) {
    if (skip_whitespace && IsSpace(text[i])) continue;
    int value = HexValue(text[i]);
    if (value < 0) {
      *why = expected + ", but character " + std::to_string(i + 1) + " is not a hex digit";
      return false;
    }
    digits.push_back(value);
  }
  if (digits.size() != 2 * kNodeKeyBytes) {
    *why = expected + ", got " + std::to_string(digits.size());
    return false;
  }
  key->clear();
  for (size_t i = 0; i < digits.size(); i += 2) {
    key->push_back(static_cast<std::uint8_t>(digits[i] * 16 + digits[i + 1]));
  }
  return true;
}

}  // namespace ampledger
