// api/content_coding.cpp
#include "api/content_coding.h"

#include <optional>

namespace ampledger {
namespace {

std::string_view Trim(std::string_view text) {
  while (!text.empty() && (text.front() == ' ' || text.front() == '\t')) text.remove_prefix(1);
  while (!text.empty() && (text.back() == ' ' || text.back() == '\t')) text.remove_suffix(1);
  return text;
}

bool EqualsIgnoringCase(std::string_view a, std::string_view b) {
  if (a.size() != b.size()) return false;
  for (std::size_t i = 0; i < a.size(); ++i) {
    char x = a[i], y = b[i];
    if (x >= 'A' && x <= 'Z') x = static_cast<char>(x - 'A' + 'a');
    if (y >= 'A' && y <= 'Z') y = static_cast<char>(y - 'A' + 'a');
    if (x != y) return false;
  }
  return true;
}

// Whether a weight parameter list (";q=0.5" and the like) leaves the coding acceptable: only
// q=0, 0., 0.0, 0.00 or 0.000 refuses (RFC 9110 section 12.4.2's qvalue).
bool Accepted(std::string_view parameters) {
  while (!parameters.empty()) {
    const std::size_t semicolon = parameters.find(';', 1);
    std::string_view parameter = Trim(parameters.substr(1, semicolon - 1));
    parameters = semicolon == std::string_view::npos ? std::string_view() : parameters.substr(semicolon);
    if (parameter.size() < 2 || (parameter[0] != 'q' && parameter[0] != 'Q') ||
        parameter[1] != '=') {
      continue;
    }
    std::string_view weight = Trim(parameter.substr(2));
    if (weight.empty() || weight[0] != '0') return true;
    return weight.find_first_not_of("0.", 1) != std::string_view::npos;
  }
  return true;
}

}  // namespace

std::string_view ChooseContentCoding(std::string_view accept_encoding) {
  std::optional<bool> gzip;      // named: accepted or refused
  bool any = false;              // "*" with a weight above zero
  while (!accept_encoding.empty()) {
    const std::size_t comma = accept_encoding.find(',');
    std::string_view element = accept_encoding.substr(0, comma);
    accept_encoding =
        comma == std::string_view::npos ? std::string_view() : accept_encoding.substr(comma + 1);
    const std::size_t semicolon = element.find(';');
    const std::string_view coding = Trim(element.substr(0, semicolon));
    const bool accepted =
        Accepted(semicolon == std::string_view::npos ? std::string_view() : element.substr(semicolon));
    if (EqualsIgnoringCase(coding, "gzip") || EqualsIgnoringCase(coding, "x-gzip")) {
      gzip = gzip.value_or(false) || accepted;
    } else if (coding == "*") {
      any = any || accepted;
    }
  }
  return gzip.value_or(any) ? "gzip" : "";
}

}  // namespace ampledger
