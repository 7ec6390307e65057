// daemon/ingest/senml_fields.h
// Internal to daemon/ingest: one SenML record as read from JSON or CBOR, before resolution.
// The JSON and CBOR readers fill RawSenmlRecords; ResolveSenml() applies RFC 8428 section 4.6.
#pragma once

#include <array>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "daemon/ingest/senml.h"

namespace ampledger {

// The labels of RFC 8428 Table 1 (JSON names) and Table 4 (CBOR integer labels).
enum class SenmlLabel {
  kBaseVersion, kBaseName, kBaseTime, kBaseUnit, kBaseValue, kBaseSum,
  kName, kUnit, kValue, kStringValue, kBoolValue, kDataValue, kSum, kTime, kUpdateTime,
};
inline constexpr int kSenmlLabelCount = static_cast<int>(SenmlLabel::kUpdateTime) + 1;

struct SenmlField {
  enum class Kind { kNumber, kText, kBytes, kBool };
  Kind kind = Kind::kNumber;
  double number = 0;
  bool integer = false;  // sent as an integer (CBOR major type 0/1, JSON integer literal)
  bool boolean = false;
  std::string text;      // kText and kBytes
};

struct RawSenmlRecord {
  std::array<std::optional<SenmlField>, kSenmlLabelCount> fields;
  std::optional<SenmlField>& operator[](SenmlLabel label) {
    return fields[static_cast<int>(label)];
  }
  const std::optional<SenmlField>& operator[](SenmlLabel label) const {
    return fields[static_cast<int>(label)];
  }
};

// The label for a JSON member name, or nullopt if it is not one of RFC 8428's.
std::optional<SenmlLabel> SenmlLabelFromJson(std::string_view name);
// The label for a CBOR integer key (RFC 8428 Table 4), or nullopt.
std::optional<SenmlLabel> SenmlLabelFromCbor(std::int64_t key);
// The kind of value each label must carry.
SenmlField::Kind SenmlLabelKind(SenmlLabel label);
const char* SenmlLabelName(SenmlLabel label);

// Applies RFC 8428 section 4.6 to `records` in pack order.
DecodeResult<SenmlPack> ResolveSenml(const std::vector<RawSenmlRecord>& records,
                                     double now_seconds);

}  // namespace ampledger
