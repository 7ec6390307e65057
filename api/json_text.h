// api/json_text.h
// Pieces of JSON text written without building nlohmann::json values, for answers with a
// row per circuit or per day: byte for byte what nlohmann::json::dump() writes for the same
// values (tests/api/json_text_test.cpp). Building such an answer as json values holds a
// std::map and heap strings per row until the dump; for a thousand circuits that was a few
// MB of small blocks per request, scattered through malloc's arenas, and the daemon's
// resident memory rose and fell with them (tests/reliability/REPORT.md, the soak).
#pragma once

#include <nlohmann/json.hpp>
#include <string>
#include <string_view>

namespace ampledger {

// Appends what dump() writes for a double: null when not finite, else its shortest
// round-trip digits, with ".0" on whole values.
void AppendJsonNumber(double value, std::string* out);

// AppendJsonNumber(value) when `present`, else null.
void AppendJsonNumberOrNull(bool present, double value, std::string* out);

// Appends a JSON string, escaped as dump() escapes it.
void AppendJsonString(std::string_view value, std::string* out);

// An object with the members of `before`, then `name`, then those of `after`, where the
// caller writes `name`'s value as text between the two calls:
//   std::string text = OpenObjectUpTo(before, "rows");
//   text += rows_text;
//   CloseObjectAfter(after, &text);
// dump() writes members in key order, so every key of `before` must sort before `name` and
// every key of `after` after it (both may be empty objects).
std::string OpenObjectUpTo(const nlohmann::json& before, std::string_view name);
void CloseObjectAfter(const nlohmann::json& after, std::string* text);

}  // namespace ampledger
