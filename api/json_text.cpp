// api/json_text.cpp
#include "api/json_text.h"

#include <cmath>

namespace ampledger {

void AppendJsonNumber(double value, std::string* out) {
  if (!std::isfinite(value)) {
    *out += "null";
    return;
  }
  // The serializer's own digits (detail::to_chars), without making a serializer per number.
  char text[64];
  const char* end = nlohmann::detail::to_chars(text, text + sizeof text, value);
  out->append(text, static_cast<std::size_t>(end - text));
}

void AppendJsonNumberOrNull(bool present, double value, std::string* out) {
  if (present) {
    AppendJsonNumber(value, out);
  } else {
    *out += "null";
  }
}

void AppendJsonString(std::string_view value, std::string* out) {
  // Plain text (the usual id or name) needs no escaping; anything else goes through dump().
  for (char c : value) {
    if (c == '"' || c == '\\' || static_cast<unsigned char>(c) < 0x20 ||
        static_cast<unsigned char>(c) >= 0x7f) {
      *out += nlohmann::json(value).dump();
      return;
    }
  }
  *out += '"';
  *out += value;
  *out += '"';
}

std::string OpenObjectUpTo(const nlohmann::json& before, std::string_view name) {
  std::string text = before.dump();
  text.pop_back();  // the closing brace
  if (text.size() > 1) text += ',';
  AppendJsonString(name, &text);
  text += ':';
  return text;
}

void CloseObjectAfter(const nlohmann::json& after, std::string* text) {
  const std::string rest = after.dump();
  if (rest.size() > 2) *text += ',';
  text->append(rest, 1);  // without the opening brace
}

}  // namespace ampledger
