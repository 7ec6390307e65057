// tests/ingest/cbor_tree_oracle.h
// The CBOR decoding ingest used before daemon/ingest/cbor_reader.h read without a tree: a
// decoder that built a CborItem tree of the whole input, and the SenML CBOR (RFC 8428 section
// 6) and COSE_Mac0 (RFC 9052) readers written on it. Kept only as the oracle of the
// differential test (cbor_reader_test.cpp) and the fuzz target: for every input, the daemon's
// readers must accept and refuse exactly as these did, with the same reason and detail.
// Header-only; pure functions; any thread.
#pragma once

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <limits>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "config/status.h"
#include "daemon/ingest/cbor_reader.h"
#include "daemon/ingest/cose_mac0.h"
#include "daemon/ingest/senml.h"
#include "daemon/ingest/senml_fields.h"

namespace ampledger::testing::tree_oracle {

struct CborItem {
  enum class Type : std::uint8_t {
    kUnsigned,  // major type 0: `value`
    kNegative,  // major type 1: the integer -1 - `value`
    kBytes,     // major type 2: `bytes`
    kText,      // major type 3: `bytes` (valid UTF-8)
    kArray,     // major type 4: `items`
    kMap,       // major type 5: `items` as key, value, key, value ...
    kTag,       // major type 6: tag number `value`, tagged item `items[0]`
    kSimple,    // major type 7 simple value `value`: 20 false, 21 true, 22 null, 23 undefined
    kFloat,     // major type 7 half/single/double float: `number`
  };

  Type type = Type::kUnsigned;
  std::uint64_t value = 0;
  double number = 0;
  std::string bytes;
  std::vector<CborItem> items;

  bool IsInteger() const { return type == Type::kUnsigned || type == Type::kNegative; }
  bool IsNumber() const { return IsInteger() || type == Type::kFloat; }
  bool IsBool() const { return type == Type::kSimple && (value == 20 || value == 21); }
  bool IsNull() const { return type == Type::kSimple && value == 22; }
  // The integer as int64, if it is an integer that fits.
  std::optional<std::int64_t> AsInt64() const;
  // Integers and floats as double (large integers round to the nearest double).
  double AsDouble() const;
  std::size_t MapSize() const { return items.size() / 2; }
};

namespace detail {

constexpr std::uint8_t kBreak = 0xff;

inline bool IsValidUtf8(std::string_view s) {
  std::size_t i = 0;
  while (i < s.size()) {
    const auto c = static_cast<unsigned char>(s[i]);
    int extra = 0;
    std::uint32_t code = 0;
    if (c < 0x80) { ++i; continue; }
    if ((c & 0xe0) == 0xc0) { extra = 1; code = c & 0x1f; }
    else if ((c & 0xf0) == 0xe0) { extra = 2; code = c & 0x0f; }
    else if ((c & 0xf8) == 0xf0) { extra = 3; code = c & 0x07; }
    else return false;
    if (i + extra >= s.size()) return false;
    for (int k = 1; k <= extra; ++k) {
      const auto d = static_cast<unsigned char>(s[i + k]);
      if ((d & 0xc0) != 0x80) return false;
      code = (code << 6) | (d & 0x3f);
    }
    // Overlong forms, surrogates and values past U+10FFFF are not UTF-8 (RFC 3629).
    static constexpr std::uint32_t kMin[] = {0, 0x80, 0x800, 0x10000};
    if (code < kMin[extra] || code > 0x10ffff || (code >= 0xd800 && code <= 0xdfff)) return false;
    i += extra + 1;
  }
  return true;
}

class Decoder {
 public:
  explicit Decoder(std::string_view in) : in_(in) {}

  Status Item(CborItem* out, int depth) {
    if (depth > kMaxCborDepth) return Fail("nesting deeper than 16");
    std::uint8_t initial;
    if (!Byte(&initial)) return Fail("truncated");
    const int major = initial >> 5;
    const int info = initial & 0x1f;
    if (initial == kBreak) return Fail("unexpected break");
    if (major == 7) return Simple(info, out);
    bool indefinite = false;
    std::uint64_t arg = 0;
    if (Status s = Argument(major, info, &arg, &indefinite); !s.ok()) return s;
    switch (major) {
      case 0: out->type = CborItem::Type::kUnsigned; out->value = arg; return Status::Ok();
      case 1: out->type = CborItem::Type::kNegative; out->value = arg; return Status::Ok();
      case 2: case 3:
        out->type = major == 2 ? CborItem::Type::kBytes : CborItem::Type::kText;
        if (Status s = String(major, arg, indefinite, &out->bytes); !s.ok()) return s;
        if (major == 3 && !IsValidUtf8(out->bytes)) return Fail("text string is not UTF-8");
        return Status::Ok();
      case 4: case 5:
        out->type = major == 4 ? CborItem::Type::kArray : CborItem::Type::kMap;
        return Container(major == 5 ? 2 : 1, arg, indefinite, &out->items, depth);
      default:  // 6: tag
        out->type = CborItem::Type::kTag;
        out->value = arg;
        out->items.resize(1);
        return Item(&out->items[0], depth + 1);
    }
  }

  bool AtEnd() const { return pos_ == in_.size(); }

 private:
  static Status Fail(const std::string& what) { return Status::InvalidArgument("CBOR: " + what); }

  bool Byte(std::uint8_t* b) {
    if (pos_ >= in_.size()) return false;
    *b = static_cast<std::uint8_t>(in_[pos_++]);
    return true;
  }

  bool Big(int count, std::uint64_t* v) {
    if (in_.size() - pos_ < static_cast<std::size_t>(count)) return false;
    *v = 0;
    for (int i = 0; i < count; ++i) *v = (*v << 8) | static_cast<std::uint8_t>(in_[pos_++]);
    return true;
  }

  Status Argument(int major, int info, std::uint64_t* arg, bool* indefinite) {
    if (info < 24) { *arg = info; return Status::Ok(); }
    if (info <= 27) {
      if (!Big(1 << (info - 24), arg)) return Fail("truncated");
      return Status::Ok();
    }
    if (info == 31 && major >= 2 && major <= 5) { *indefinite = true; return Status::Ok(); }
    return Fail("reserved additional information");
  }

  Status String(int major, std::uint64_t length, bool indefinite, std::string* out) {
    if (!indefinite) {
      if (length > in_.size() - pos_) return Fail("truncated string");
      out->assign(in_.substr(pos_, length));
      pos_ += length;
      return Status::Ok();
    }
    // Chunks: definite-length strings of the same major type, up to a break.
    for (;;) {
      std::uint8_t initial;
      if (!Byte(&initial)) return Fail("truncated");
      if (initial == kBreak) return Status::Ok();
      if ((initial >> 5) != major) return Fail("bad chunk in indefinite string");
      bool nested = false;
      std::uint64_t chunk = 0;
      if (Status s = Argument(major, initial & 0x1f, &chunk, &nested); !s.ok()) return s;
      if (nested) return Fail("nested indefinite string");
      if (chunk > in_.size() - pos_) return Fail("truncated string");
      out->append(in_.substr(pos_, chunk));
      pos_ += chunk;
    }
  }

  Status Container(int per_entry, std::uint64_t count, bool indefinite,
                   std::vector<CborItem>* items, int depth) {
    // `count` is attacker-controlled: reserve no more than a typical SenML pack needs and
    // the bytes left could hold (each item takes at least one).
    constexpr std::uint64_t kMaxReserve = 64;
    if (!indefinite) {
      const std::uint64_t left = in_.size() - pos_;
      items->reserve(static_cast<std::size_t>(
          per_entry * std::min({count, left, kMaxReserve})));
    }
    for (std::uint64_t i = 0; indefinite || i < count; ++i) {
      if (indefinite) {
        if (pos_ >= in_.size()) return Fail("truncated");
        if (static_cast<std::uint8_t>(in_[pos_]) == kBreak) { ++pos_; return Status::Ok(); }
      }
      for (int k = 0; k < per_entry; ++k) {
        if (pos_ >= in_.size()) return Fail("truncated");
        items->emplace_back();
        if (Status s = Item(&items->back(), depth + 1); !s.ok()) return s;
      }
    }
    return Status::Ok();
  }

  Status Simple(int info, CborItem* out) {
    std::uint64_t bits = 0;
    switch (info) {
      case 24:
        if (!Big(1, &bits)) return Fail("truncated");
        if (bits < 32) return Fail("simple value in two bytes below 32");
        out->type = CborItem::Type::kSimple;
        out->value = bits;
        return Status::Ok();
      case 25:
        if (!Big(2, &bits)) return Fail("truncated");
        out->type = CborItem::Type::kFloat;
        out->number = HalfToDouble(static_cast<std::uint16_t>(bits));
        return Status::Ok();
      case 26: {
        if (!Big(4, &bits)) return Fail("truncated");
        const auto word = static_cast<std::uint32_t>(bits);
        float f;
        std::memcpy(&f, &word, sizeof f);
        out->type = CborItem::Type::kFloat;
        out->number = f;
        return Status::Ok();
      }
      case 27: {
        if (!Big(8, &bits)) return Fail("truncated");
        double d;
        std::memcpy(&d, &bits, sizeof d);
        out->type = CborItem::Type::kFloat;
        out->number = d;
        return Status::Ok();
      }
      default:
        if (info >= 28) return Fail("reserved additional information");
        out->type = CborItem::Type::kSimple;
        out->value = static_cast<std::uint64_t>(info);
        return Status::Ok();
    }
  }

  std::string_view in_;
  std::size_t pos_ = 0;
};


}  // namespace detail

inline std::optional<std::int64_t> CborItem::AsInt64() const {
  constexpr auto kMax = static_cast<std::uint64_t>(std::numeric_limits<std::int64_t>::max());
  if (type == Type::kUnsigned && value <= kMax) return static_cast<std::int64_t>(value);
  if (type == Type::kNegative && value <= kMax) return -1 - static_cast<std::int64_t>(value);
  return std::nullopt;
}

inline double CborItem::AsDouble() const {
  switch (type) {
    case Type::kUnsigned: return static_cast<double>(value);
    case Type::kNegative: return -1.0 - static_cast<double>(value);
    case Type::kFloat: return number;
    default: return 0;
  }
}

inline Result<CborItem> DecodeCbor(std::string_view bytes) {
  detail::Decoder decoder(bytes);
  CborItem item;
  if (Status s = decoder.Item(&item, 0); !s.ok()) return s;
  if (!decoder.AtEnd()) return Status::InvalidArgument("CBOR: trailing bytes after the item");
  return item;
}


namespace detail {

inline Refusal SenmlMalformed(std::string detail) {
  return Refuse(RefusalReason::kMalformed, "SenML: " + std::move(detail));
}
inline Refusal Bad(std::string detail) { return Refuse(RefusalReason::kMalformed, std::move(detail)); }
inline Refusal Malformed(std::string detail) {
  return Refuse(RefusalReason::kMalformed, "COSE_Mac0: " + std::move(detail));
}
constexpr std::int64_t kLabelAlg = 1;
constexpr std::int64_t kLabelCrit = 2;
constexpr std::int64_t kLabelKid = 4;

// A CBOR number: integer, float, or decimal fraction (tag 4, RFC 8949 section 3.4.4), which
// RFC 8428 section 6 allows for numbers.
inline std::optional<Refusal> CborNumber(const CborItem& item, SenmlField* field) {
  field->kind = SenmlField::Kind::kNumber;
  if (item.IsInteger()) {
    field->integer = true;
    field->number = item.AsDouble();
    return std::nullopt;
  }
  if (item.type == CborItem::Type::kFloat) {
    field->number = item.number;
    return std::nullopt;
  }
  if (item.type == CborItem::Type::kTag && item.value == 4) {
    const CborItem& pair = item.items[0];
    if (pair.type != CborItem::Type::kArray || pair.items.size() != 2 ||
        !pair.items[0].IsInteger() || !pair.items[1].IsInteger()) {
      return Bad("decimal fraction is not [exponent, mantissa]");
    }
    const double exponent = pair.items[0].AsDouble();
    if (std::fabs(exponent) > 400) return Bad("decimal fraction exponent out of range");
    field->number = pair.items[1].AsDouble() * std::pow(10.0, exponent);
    return std::nullopt;
  }
  if (item.type == CborItem::Type::kTag) {
    return Refuse(RefusalReason::kUnsupported,
                  "CBOR tag " + std::to_string(item.value) + " on a number");
  }
  return Bad("expected a number");
}

inline std::optional<Refusal> CborField(SenmlLabel label, const CborItem& item, SenmlField* field) {
  const SenmlField::Kind kind = SenmlLabelKind(label);
  if (kind == SenmlField::Kind::kNumber) {
    if (auto refusal = CborNumber(item, field)) return refusal;
    // RFC 8428 section 6: "For the version number, only an unsigned integer is allowed."
    if (label == SenmlLabel::kBaseVersion && item.type != CborItem::Type::kUnsigned) {
      return Bad("bver must be an unsigned integer");
    }
    return std::nullopt;
  }
  field->kind = kind;
  const bool ok = (kind == SenmlField::Kind::kText && item.type == CborItem::Type::kText) ||
                  (kind == SenmlField::Kind::kBytes && item.type == CborItem::Type::kBytes) ||
                  (kind == SenmlField::Kind::kBool && item.IsBool());
  if (!ok) return Bad(std::string("wrong type for ") + SenmlLabelName(label));
  field->text = item.bytes;
  field->boolean = item.value == 21;
  return std::nullopt;
}

inline DecodeResult<RawSenmlRecord> CborRecord(const CborItem& map) {
  if (map.type != CborItem::Type::kMap) return Bad("a record is not a map");
  RawSenmlRecord record;
  std::vector<std::string> other_keys;  // labels we do not know, kept to refuse duplicates
  auto first_time = [&other_keys](std::string key) {
    if (std::find(other_keys.begin(), other_keys.end(), key) != other_keys.end()) return false;
    other_keys.push_back(std::move(key));
    return true;
  };
  for (std::size_t i = 0; i + 1 < map.items.size(); i += 2) {
    const CborItem& key = map.items[i];
    const CborItem& value = map.items[i + 1];
    if (key.type == CborItem::Type::kText) {
      // RFC 8428 section 6: labels beyond Table 4 are text; unknown ones are ignored unless
      // they end in "_" (section 4.4, must understand).
      if (!first_time("t" + key.bytes)) return Bad("duplicate label \"" + key.bytes + "\"");
      if (!key.bytes.empty() && key.bytes.back() == '_') {
        return Refuse(RefusalReason::kUnsupported,
                      "must-understand label \"" + key.bytes + "\"");
      }
      continue;
    }
    const std::optional<std::int64_t> number = key.AsInt64();
    if (!number) return Bad("a label is neither an integer nor text");
    const std::optional<SenmlLabel> label = SenmlLabelFromCbor(*number);
    if (!label) {  // no further integer labels will be defined; ignore
      if (!first_time("i" + std::to_string(*number))) return Bad("duplicate label");
      continue;
    }
    if (record[*label]) return Bad(std::string("duplicate label ") + SenmlLabelName(*label));
    SenmlField field;
    if (auto refusal = CborField(*label, value, &field)) return *refusal;
    record[*label] = std::move(field);
  }
  return record;
}

// Collected header parameters from both buckets.
struct Headers {
  std::optional<std::int64_t> alg;
  bool alg_seen = false;
  std::optional<std::string> kid;
};

inline std::optional<Refusal> ReadHeaderMap(const CborItem& map, std::vector<std::string>* seen,
                                     Headers* headers) {
  if (map.type != CborItem::Type::kMap) return Malformed("a header bucket is not a map");
  for (std::size_t i = 0; i + 1 < map.items.size(); i += 2) {
    const CborItem& key = map.items[i];
    const CborItem& value = map.items[i + 1];
    // RFC 9052 section 3: labels are int or tstr; one label in only one bucket, once.
    std::string identity;
    if (key.IsInteger()) {
      identity = (key.type == CborItem::Type::kNegative ? "-" : "+") + std::to_string(key.value);
    } else if (key.type == CborItem::Type::kText) {
      identity = "t" + key.bytes;
    } else {
      return Malformed("a header label is neither int nor text");
    }
    for (const std::string& s : *seen) {
      if (s == identity) return Malformed("header label repeated");
    }
    seen->push_back(identity);
    const std::optional<std::int64_t> label = key.AsInt64();
    if (!key.IsInteger() || !label) continue;
    if (*label == kLabelAlg) {
      headers->alg_seen = true;
      headers->alg = value.AsInt64();
      if (!value.IsInteger() && value.type != CborItem::Type::kText) {
        return Malformed("alg is neither int nor text");
      }
    } else if (*label == kLabelCrit) {
      // We understand no optional header parameter, so any crit list names one we do not.
      return Refuse(RefusalReason::kUnsupported, "COSE_Mac0: crit header present");
    } else if (*label == kLabelKid) {
      if (value.type != CborItem::Type::kBytes) return Malformed("kid is not a bstr");
      headers->kid = value.bytes;
    }
  }
  return std::nullopt;
}

}  // namespace detail

inline DecodeResult<SenmlPack> DecodeSenmlCbor(std::string_view bytes, double now_seconds) {
  Result<CborItem> decoded = DecodeCbor(bytes);
  if (!decoded.ok()) return detail::SenmlMalformed(decoded.status().message());
  const CborItem* top = &decoded.value();
  // The self-described CBOR tag (RFC 8949 section 3.4.6) only marks the bytes as CBOR.
  if (top->type == CborItem::Type::kTag && top->value == 55799) top = &top->items[0];
  if (top->type == CborItem::Type::kTag) {
    return Refuse(RefusalReason::kUnsupported,
                  "SenML: CBOR tag " + std::to_string(top->value) + " around the pack");
  }
  if (top->type != CborItem::Type::kArray) return detail::SenmlMalformed("the pack is not an array");
  std::vector<RawSenmlRecord> raw;
  raw.reserve(top->items.size());  // bounded: each came from at least one byte of `bytes`
  for (std::size_t i = 0; i < top->items.size(); ++i) {
    DecodeResult<RawSenmlRecord> record = detail::CborRecord(top->items[i]);
    if (!record.ok()) {
      return Refuse(record.reason(),
                    "SenML: record " + std::to_string(i + 1) + ": " + record.refusal().detail);
    }
    raw.push_back(std::move(record).value());
  }
  return ResolveSenml(raw, now_seconds);
}

inline DecodeResult<CoseMac0> ParseCoseMac0(std::string_view bytes) {
  Result<CborItem> decoded = DecodeCbor(bytes);
  if (!decoded.ok()) return detail::Malformed(decoded.status().message());
  CoseMac0 out;
  const CborItem* array = &decoded.value();
  if (array->type == CborItem::Type::kTag) {
    if (array->value != kCoseMac0Tag) {
      return Refuse(RefusalReason::kUnsupported,
                    "COSE_Mac0: CBOR tag " + std::to_string(array->value) + " (expected 17)");
    }
    out.tagged = true;
    array = &array->items[0];
  }
  if (array->type != CborItem::Type::kArray || array->items.size() != 4) {
    return detail::Malformed("not an array of 4");
  }
  const CborItem& protected_item = array->items[0];
  const CborItem& unprotected = array->items[1];
  const CborItem& payload = array->items[2];
  const CborItem& tag = array->items[3];
  if (protected_item.type != CborItem::Type::kBytes) return detail::Malformed("protected is not a bstr");
  if (payload.IsNull()) return detail::Malformed("detached payload");
  if (payload.type != CborItem::Type::kBytes || tag.type != CborItem::Type::kBytes) {
    return detail::Malformed("payload or tag is not a bstr");
  }
  std::vector<std::string> seen;
  detail::Headers headers;
  if (!protected_item.bytes.empty()) {
    Result<CborItem> map = DecodeCbor(protected_item.bytes);
    if (!map.ok()) return detail::Malformed("protected header: " + map.status().message());
    if (auto refusal = detail::ReadHeaderMap(map.value(), &seen, &headers)) return *refusal;
  }
  if (auto refusal = detail::ReadHeaderMap(unprotected, &seen, &headers)) return *refusal;
  if (!headers.alg_seen) return detail::Malformed("no alg");
  if (!headers.alg || (*headers.alg != 4 && *headers.alg != 5)) {
    return Refuse(RefusalReason::kUnsupported,
                  "COSE_Mac0: alg is not 4 (HMAC 256/64) or 5 (HMAC 256/256)");
  }
  out.alg = static_cast<MacAlgorithm>(*headers.alg);
  if (tag.bytes.size() != MacTagLength(out.alg)) return detail::Malformed("tag length does not match alg");
  out.protected_bytes = protected_item.bytes;
  out.kid = headers.kid.value_or("");
  out.payload = payload.bytes;
  out.tag = tag.bytes;
  return out;
}

}  // namespace ampledger::testing::tree_oracle
