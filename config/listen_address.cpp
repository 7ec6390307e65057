// config/listen_address.cpp
// ParseListenAddress (declared in config/config.h): "host:port" and "[v6]:port".
#include <arpa/inet.h>

#include <cctype>

#include "config/config.h"

namespace ampledger {

namespace {

constexpr const char* kExpected =
    "expected \"host:port\" or \"[IPv6]:port\" with a port from 0 to 65535";

bool IsDnsName(std::string_view host) {
  if (host.empty() || host.size() > 253) return false;
  for (char c : host) {
    if (!std::isalnum(static_cast<unsigned char>(c)) && c != '-' && c != '.') return false;
  }
  return host.front() != '-' && host.front() != '.';
}

bool ParsePort(std::string_view text, int* port) {
  if (text.empty() || text.size() > 5) return false;
  int value = 0;
  for (char c : text) {
    if (c < '0' || c > '9') return false;
    value = value * 10 + (c - '0');
  }
  *port = value;
  return value <= 65535;
}

}  // namespace

Result<ListenAddress> ParseListenAddress(std::string_view text) {
  const std::string got = ", got \"" + std::string(text) + "\"";
  ListenAddress address;
  std::string_view port;
  if (!text.empty() && text.front() == '[') {
    size_t close = text.find(']');
    if (close == std::string_view::npos || close + 1 >= text.size() || text[close + 1] != ':') {
      return Status::InvalidArgument(kExpected + got);
    }
    address.host = std::string(text.substr(1, close - 1));
    in6_addr v6;
    if (inet_pton(AF_INET6, address.host.c_str(), &v6) != 1) {
      return Status::InvalidArgument("\"" + address.host + "\" is not an IPv6 address; " +
                                     kExpected + got);
    }
    port = text.substr(close + 2);
  } else {
    size_t colon = text.rfind(':');
    if (colon == std::string_view::npos || text.find(':') != colon) {
      return Status::InvalidArgument(kExpected + got);
    }
    address.host = std::string(text.substr(0, colon));
    if (!IsDnsName(address.host)) return Status::InvalidArgument(kExpected + got);
    // All digits and dots is meant as IPv4, so "300.1.1.1" is a mistake, not a name.
    if (address.host.find_first_not_of("0123456789.") == std::string::npos) {
      in_addr v4;
      if (inet_pton(AF_INET, address.host.c_str(), &v4) != 1) {
        return Status::InvalidArgument("\"" + address.host + "\" is not an IPv4 address; " +
                                       kExpected + got);
      }
    }
    port = text.substr(colon + 1);
  }
  if (!ParsePort(port, &address.port)) return Status::InvalidArgument(kExpected + got);
  return address;
}

}  // namespace ampledger
