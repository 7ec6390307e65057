// daemon/ingest/senml.h
// SenML (RFC 8428) packs decoded from JSON (section 5) or CBOR (section 6) and resolved as
// section 4.6 says: base fields carried forward to later records, bn + n names, bt + t times,
// times below 2^28 relative to `now`, bv added to v, bs added to s, bu as the default unit.
// Refusals: kMalformed (syntax, types, duplicate labels, name characters, value fields) and
// kUnsupported (a version we do not know, a must-understand label ending in "_", a CBOR tag).
// Unknown labels are ignored (RFC 8428 section 4.4). Pure functions; any thread.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "daemon/ingest/refusal.h"

namespace ampledger {

// RFC 8428 versions: 10 is the base version; RFC 9100 reads bver as a feature bitmap in which
// code 4 "Secondary Units" (RFC 8798 section 3) makes 26. Versions 1..10 and 26 are understood.
inline constexpr int kSenmlBaseVersion = 10;
inline constexpr int kSenmlSecondaryUnitsVersion = 26;

// Times at or above 2^28 seconds are absolute POSIX times; below, relative to "now".
inline constexpr double kSenmlRelativeTimeLimit = 268435456.0;

// One resolved record. Exactly one of the four value fields is set, unless `sum` is set, in
// which case there may be none.
struct SenmlRecord {
  std::string name;  // bn + n, checked against RFC 8428 section 4.5.1
  std::string unit;  // u, else bu, else ""
  std::optional<double> value;
  std::optional<std::string> string_value;
  std::optional<bool> bool_value;
  std::optional<std::string> data_value;  // raw octets (base64url-decoded for JSON)
  std::optional<double> sum;              // bs + s
  double time = 0;                        // absolute POSIX seconds
  std::optional<double> update_time;      // ut, seconds
};

struct SenmlPack {
  int version = kSenmlBaseVersion;
  std::vector<SenmlRecord> records;  // chronological; records at equal times keep pack order
};

// `now_seconds`: POSIX seconds at reception, for relative times.
DecodeResult<SenmlPack> DecodeSenmlJson(std::string_view text, double now_seconds);
DecodeResult<SenmlPack> DecodeSenmlCbor(std::string_view bytes, double now_seconds);

// True if `name` obeys RFC 8428 section 4.5.1: non-empty, first character A-Z a-z 0-9, the rest
// A-Z a-z 0-9 - : . / _
bool IsValidSenmlName(std::string_view name);

}  // namespace ampledger
