// daemon/ingest/senml.cpp
// SenML CBOR reading (RFC 8428 section 6) and the resolution rules of section 4.6 shared with
// the JSON reader (senml_json.cpp).
#include <algorithm>
#include <cmath>

#include "daemon/ingest/cbor_reader.h"
#include "daemon/ingest/senml.h"
#include "daemon/ingest/senml_fields.h"

namespace ampledger {
namespace {

struct LabelInfo {
  SenmlLabel label;
  const char* json;
  int cbor;
  SenmlField::Kind kind;
};

// RFC 8428 Table 1 (JSON) and Table 4 (CBOR).
constexpr LabelInfo kLabels[] = {
    {SenmlLabel::kBaseVersion, "bver", -1, SenmlField::Kind::kNumber},
    {SenmlLabel::kBaseName, "bn", -2, SenmlField::Kind::kText},
    {SenmlLabel::kBaseTime, "bt", -3, SenmlField::Kind::kNumber},
    {SenmlLabel::kBaseUnit, "bu", -4, SenmlField::Kind::kText},
    {SenmlLabel::kBaseValue, "bv", -5, SenmlField::Kind::kNumber},
    {SenmlLabel::kBaseSum, "bs", -6, SenmlField::Kind::kNumber},
    {SenmlLabel::kName, "n", 0, SenmlField::Kind::kText},
    {SenmlLabel::kUnit, "u", 1, SenmlField::Kind::kText},
    {SenmlLabel::kValue, "v", 2, SenmlField::Kind::kNumber},
    {SenmlLabel::kStringValue, "vs", 3, SenmlField::Kind::kText},
    {SenmlLabel::kBoolValue, "vb", 4, SenmlField::Kind::kBool},
    {SenmlLabel::kDataValue, "vd", 8, SenmlField::Kind::kBytes},
    {SenmlLabel::kSum, "s", 5, SenmlField::Kind::kNumber},
    {SenmlLabel::kTime, "t", 6, SenmlField::Kind::kNumber},
    {SenmlLabel::kUpdateTime, "ut", 7, SenmlField::Kind::kNumber},
};

const LabelInfo& Info(SenmlLabel label) { return kLabels[static_cast<int>(label)]; }

Refusal Malformed(std::string detail) {
  return Refuse(RefusalReason::kMalformed, "SenML: " + std::move(detail));
}

// For the CBOR record readers, whose messages DecodeSenmlCbor prefixes.
Refusal Bad(std::string detail) { return Refuse(RefusalReason::kMalformed, std::move(detail)); }

bool IsUnderstoodVersion(double version) {
  return (version >= 1 && version <= kSenmlBaseVersion) || version == kSenmlSecondaryUnitsVersion;
}

// A CBOR number: integer, float, or decimal fraction (tag 4, RFC 8949 section 3.4.4), which
// RFC 8428 section 6 allows for numbers. `item` is the head just read from `reader`.
std::optional<Refusal> CborNumber(const CborHead& item, CborReader* reader, SenmlField* field) {
  field->kind = SenmlField::Kind::kNumber;
  if (item.IsInteger()) {
    field->integer = true;
    field->number = item.AsDouble();
    return std::nullopt;
  }
  if (item.type == CborType::kFloat) {
    field->number = item.number;
    return std::nullopt;
  }
  if (item.type == CborType::kTag && item.value == 4) {
    const CborHead pair = reader->Read();
    CborHead parts[2];
    std::uint64_t count = 0;
    if (pair.type == CborType::kArray) {
      for (; reader->More(pair, count); ++count) {
        const CborHead part = reader->Read();
        if (count < 2) parts[count] = part;
        reader->SkipContent(part);
      }
    }
    if (pair.type != CborType::kArray || count != 2 || !parts[0].IsInteger() ||
        !parts[1].IsInteger()) {
      return Bad("decimal fraction is not [exponent, mantissa]");
    }
    const double exponent = parts[0].AsDouble();
    if (std::fabs(exponent) > 400) return Bad("decimal fraction exponent out of range");
    field->number = parts[1].AsDouble() * std::pow(10.0, exponent);
    return std::nullopt;
  }
  if (item.type == CborType::kTag) {
    return Refuse(RefusalReason::kUnsupported,
                  "CBOR tag " + std::to_string(item.value) + " on a number");
  }
  return Bad("expected a number");
}

// Reads the value of `label` from `reader` into `field`.
std::optional<Refusal> CborField(SenmlLabel label, CborReader* reader, SenmlField* field) {
  const CborHead item = reader->Read();
  const SenmlField::Kind kind = SenmlLabelKind(label);
  if (kind == SenmlField::Kind::kNumber) {
    if (auto refusal = CborNumber(item, reader, field)) return refusal;
    // RFC 8428 section 6: "For the version number, only an unsigned integer is allowed."
    if (label == SenmlLabel::kBaseVersion && item.type != CborType::kUnsigned) {
      return Bad("bver must be an unsigned integer");
    }
    return std::nullopt;
  }
  field->kind = kind;
  const bool ok = (kind == SenmlField::Kind::kText && item.type == CborType::kText) ||
                  (kind == SenmlField::Kind::kBytes && item.type == CborType::kBytes) ||
                  (kind == SenmlField::Kind::kBool && item.IsBool());
  if (!ok) return Bad(std::string("wrong type for ") + SenmlLabelName(label));
  field->text = item.bytes;
  field->boolean = item.value == 21;
  return std::nullopt;
}

// Reads the record whose head `map` was just read.
std::optional<Refusal> CborRecord(const CborHead& map, CborReader* reader,
                                  RawSenmlRecord* record) {
  if (map.type != CborType::kMap) return Bad("a record is not a map");
  std::vector<std::string> other_keys;  // labels we do not know, kept to refuse duplicates
  auto first_time = [&other_keys](std::string key) {
    if (std::find(other_keys.begin(), other_keys.end(), key) != other_keys.end()) return false;
    other_keys.push_back(std::move(key));
    return true;
  };
  for (std::uint64_t i = 0; reader->More(map, i); ++i) {
    const CborHead key = reader->Read();
    if (key.type == CborType::kText) {
      // RFC 8428 section 6: labels beyond Table 4 are text; unknown ones are ignored unless
      // they end in "_" (section 4.4, must understand).
      const std::string text(key.bytes);
      if (!first_time("t" + text)) return Bad("duplicate label \"" + text + "\"");
      if (!text.empty() && text.back() == '_') {
        return Refuse(RefusalReason::kUnsupported, "must-understand label \"" + text + "\"");
      }
      reader->Skip();
      continue;
    }
    const std::optional<std::int64_t> number = key.AsInt64();
    if (!number) return Bad("a label is neither an integer nor text");
    const std::optional<SenmlLabel> label = SenmlLabelFromCbor(*number);
    if (!label) {  // no further integer labels will be defined; ignore
      if (!first_time("i" + std::to_string(*number))) return Bad("duplicate label");
      reader->Skip();
      continue;
    }
    if ((*record)[*label]) return Bad(std::string("duplicate label ") + SenmlLabelName(*label));
    SenmlField field;
    if (auto refusal = CborField(*label, reader, &field)) return *refusal;
    (*record)[*label] = std::move(field);
  }
  return std::nullopt;
}

bool HasAnyRegularField(const RawSenmlRecord& r) {
  for (int i = static_cast<int>(SenmlLabel::kName); i < kSenmlLabelCount; ++i) {
    if (r.fields[i]) return true;
  }
  return false;
}

// The carried-forward base fields.
struct BaseState {
  std::string name;
  double time = 0;
  std::string unit;
  std::optional<double> value;
  std::optional<double> sum;
};

std::optional<Refusal> CheckFinite(const RawSenmlRecord& r) {
  for (const LabelInfo& info : kLabels) {
    const auto& field = r[info.label];
    if (field && field->kind == SenmlField::Kind::kNumber && !std::isfinite(field->number)) {
      return Bad(std::string(info.json) + " is not a finite number");
    }
  }
  return std::nullopt;
}

}  // namespace

std::optional<SenmlLabel> SenmlLabelFromJson(std::string_view name) {
  for (const LabelInfo& info : kLabels) {
    if (name == info.json) return info.label;
  }
  return std::nullopt;
}

std::optional<SenmlLabel> SenmlLabelFromCbor(std::int64_t key) {
  for (const LabelInfo& info : kLabels) {
    if (key == info.cbor) return info.label;
  }
  return std::nullopt;
}

SenmlField::Kind SenmlLabelKind(SenmlLabel label) { return Info(label).kind; }
const char* SenmlLabelName(SenmlLabel label) { return Info(label).json; }

bool IsValidSenmlName(std::string_view name) {
  auto alnum = [](char c) {
    return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9');
  };
  if (name.empty() || !alnum(name[0])) return false;
  for (const char c : name) {
    if (!alnum(c) && c != '-' && c != ':' && c != '.' && c != '/' && c != '_') return false;
  }
  return true;
}

DecodeResult<SenmlPack> ResolveSenml(const std::vector<RawSenmlRecord>& records,
                                     double now_seconds) {
  using L = SenmlLabel;
  SenmlPack pack;
  std::optional<int> version;
  BaseState base;
  for (std::size_t index = 0; index < records.size(); ++index) {
    const RawSenmlRecord& r = records[index];
    // Only refusals use it: built on the error path, never per accepted record.
    const auto where = [index] { return "record " + std::to_string(index + 1) + ": "; };
    if (auto refusal = CheckFinite(r)) return Malformed(where() + refusal->detail);
    if (r[L::kBaseVersion]) {
      const SenmlField& v = *r[L::kBaseVersion];
      if (!v.integer || v.number < 0) return Malformed(where() + "bver must be an unsigned integer");
      if (!IsUnderstoodVersion(v.number)) {
        return Refuse(RefusalReason::kUnsupported,
                      "SenML: " + where() + "version " + std::to_string(v.number) +
                          " is newer than this reader understands (10, 26)");
      }
      // RFC 8428 section 4.4: all records of a pack have the same version.
      if (version && *version != static_cast<int>(v.number)) {
        return Malformed(where() + "bver differs from an earlier record");
      }
      version = static_cast<int>(v.number);
    }
    if (r[L::kBaseName]) base.name = r[L::kBaseName]->text;
    if (r[L::kBaseTime]) base.time = r[L::kBaseTime]->number;
    if (r[L::kBaseUnit]) base.unit = r[L::kBaseUnit]->text;
    if (r[L::kBaseValue]) base.value = r[L::kBaseValue]->number;
    if (r[L::kBaseSum]) base.sum = r[L::kBaseSum]->number;
    // A record of base fields only (RFC 8428 section 5.1.7, first example) sets bases and
    // measures nothing.
    if (!HasAnyRegularField(r)) continue;

    SenmlRecord out;
    out.name = base.name + (r[L::kName] ? r[L::kName]->text : "");
    if (!IsValidSenmlName(out.name)) {
      return Malformed(where() + "name \"" + out.name + "\" breaks RFC 8428 section 4.5.1");
    }
    out.unit = r[L::kUnit] ? r[L::kUnit]->text : base.unit;
    int value_fields = 0;
    if (r[L::kValue]) {
      out.value = base.value.value_or(0) + r[L::kValue]->number;
      ++value_fields;
    }
    if (r[L::kStringValue]) { out.string_value = r[L::kStringValue]->text; ++value_fields; }
    if (r[L::kBoolValue]) { out.bool_value = r[L::kBoolValue]->boolean; ++value_fields; }
    if (r[L::kDataValue]) { out.data_value = r[L::kDataValue]->text; ++value_fields; }
    // Section 4.5.4: a missing Value with a Base Value present counts the Value as zero.
    if (value_fields == 0 && base.value) {
      out.value = *base.value;
      ++value_fields;
    }
    if (r[L::kSum] || base.sum) {
      out.sum = base.sum.value_or(0) + (r[L::kSum] ? r[L::kSum]->number : 0);
    }
    if (value_fields > 1) return Malformed(where() + "more than one value field");
    if (value_fields == 0 && !out.sum) return Malformed(where() + "no value and no sum");
    out.time = base.time + (r[L::kTime] ? r[L::kTime]->number : 0);
    if (out.time < kSenmlRelativeTimeLimit) out.time += now_seconds;
    if (r[L::kUpdateTime]) {
      if (r[L::kUpdateTime]->number < 0) return Malformed(where() + "negative ut");
      out.update_time = r[L::kUpdateTime]->number;
    }
    if (!std::isfinite(out.time) || (out.value && !std::isfinite(*out.value)) ||
        (out.sum && !std::isfinite(*out.sum))) {
      return Malformed(where() + "a resolved number is not finite");
    }
    pack.records.push_back(std::move(out));
  }
  if (version) pack.version = *version;
  auto earlier = [](const SenmlRecord& a, const SenmlRecord& b) { return a.time < b.time; };
  // Nodes send their records in time order; sorting is for those that do not.
  if (!std::is_sorted(pack.records.begin(), pack.records.end(), earlier)) {
    std::stable_sort(pack.records.begin(), pack.records.end(), earlier);
  }
  return pack;
}

DecodeResult<SenmlPack> DecodeSenmlCbor(std::string_view bytes, double now_seconds) {
  if (Status checked = CheckCbor(bytes); !checked.ok()) return Malformed(checked.message());
  CborReader reader(bytes);
  CborHead top = reader.Read();
  // The self-described CBOR tag (RFC 8949 section 3.4.6) only marks the bytes as CBOR.
  if (top.type == CborType::kTag && top.value == 55799) top = reader.Read();
  if (top.type == CborType::kTag) {
    return Refuse(RefusalReason::kUnsupported,
                  "SenML: CBOR tag " + std::to_string(top.value) + " around the pack");
  }
  if (top.type != CborType::kArray) return Malformed("the pack is not an array");
  std::vector<RawSenmlRecord> raw;
  // Bounded: each record takes at least one byte of `bytes`.
  raw.reserve(std::min<std::uint64_t>(reader.CountEntries(top), bytes.size()));
  for (std::uint64_t i = 0; reader.More(top, i); ++i) {
    const CborHead map = reader.Read();
    if (auto refusal = CborRecord(map, &reader, &raw.emplace_back())) {
      return Refuse(refusal->reason,
                    "SenML: record " + std::to_string(i + 1) + ": " + refusal->detail);
    }
  }
  return ResolveSenml(raw, now_seconds);
}

}  // namespace ampledger
