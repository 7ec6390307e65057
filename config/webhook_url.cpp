// config/webhook_url.cpp
// ParseWebhookUrl (declared in config/config.h).
#include <cctype>

#include "config/config.h"

namespace ampledger {

namespace {

constexpr const char* kExpected =
    "expected \"http://host[:port]/path\" or \"https://host[:port]/path\"";

bool IsHostCharacter(char c) {
  return std::isalnum(static_cast<unsigned char>(c)) || c == '-' || c == '.';
}

Status Bad(std::string_view text, const std::string& why) {
  return Status::InvalidArgument(std::string(kExpected) + ", got \"" + std::string(text) +
                                 "\" (" + why + ")");
}

}  // namespace

Result<WebhookUrl> ParseWebhookUrl(std::string_view text) {
  WebhookUrl url;
  std::string_view rest;
  if (text.substr(0, 7) == "http://") {
    rest = text.substr(7);
  } else if (text.substr(0, 8) == "https://") {
    url.https = true;
    rest = text.substr(8);
  } else {
    return Bad(text, "the scheme must be http or https");
  }
  const std::size_t path_start = rest.find('/');
  std::string_view authority = rest.substr(0, path_start);
  url.path = path_start == std::string_view::npos ? "/" : std::string(rest.substr(path_start));
  for (char c : url.path) {
    if (static_cast<unsigned char>(c) <= ' ' || c == 0x7f || c == '#') {
      return Bad(text, "the path may not hold spaces, control characters or a fragment");
    }
  }
  if (authority.find('@') != std::string_view::npos) {
    return Bad(text, "user names and passwords do not belong in the URL");
  }
  std::string_view port_text;
  if (!authority.empty() && authority.front() == '[') {
    const std::size_t close = authority.find(']');
    if (close == std::string_view::npos) return Bad(text, "an IPv6 host needs its closing ]");
    url.host = std::string(authority.substr(0, close + 1));
    std::string_view after = authority.substr(close + 1);
    if (!after.empty() && after.front() != ':') return Bad(text, "unexpected text after ]");
    port_text = after.empty() ? "" : after.substr(1);
    if (after == ":") return Bad(text, "empty port");
  } else {
    const std::size_t colon = authority.find(':');
    url.host = std::string(authority.substr(0, colon));
    if (colon != std::string_view::npos) {
      port_text = authority.substr(colon + 1);
      if (port_text.empty()) return Bad(text, "empty port");
    }
    for (char c : url.host) {
      if (!IsHostCharacter(c)) return Bad(text, "the host may hold only letters, digits, - and .");
    }
  }
  if (url.host.empty() || url.host == "[]") return Bad(text, "no host");
  url.port = url.https ? 443 : 80;
  if (!port_text.empty()) {
    int port = 0;
    for (char c : port_text) {
      if (c < '0' || c > '9' || port > 65535) return Bad(text, "the port must be 1 to 65535");
      port = port * 10 + (c - '0');
    }
    if (port < 1 || port > 65535) return Bad(text, "the port must be 1 to 65535");
    url.port = port;
  }
  return url;
}

}  // namespace ampledger
