// api/content_coding.h
// Which content coding the daemon may answer a request with, from its Accept-Encoding header
// (RFC 9110 section 12.5.3). Only gzip is ever chosen: httplib (0.11) answers "br" with
// Brotli at its highest quality, which took 110 to 150 ms of CPU for a year of daily points
// (68 KB of JSON) where gzip took 1 to 2 ms and no coding about as much (curl against
// `ampledger demo`, 2026-12-02). Every browser accepts gzip.
#pragma once

#include <string_view>

namespace ampledger {

// "gzip" when `accept_encoding` accepts gzip (or "x-gzip", RFC 9110 section 8.4.1.3, or "*")
// with a weight above zero, else "" (answer unencoded). Coding names are case-insensitive;
// an explicit q=0 refuses a coding even when "*" would accept it.
std::string_view ChooseContentCoding(std::string_view accept_encoding);

}  // namespace ampledger
