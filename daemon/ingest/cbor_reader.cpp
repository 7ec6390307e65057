// daemon/ingest/cbor_reader.cpp
#include "daemon/ingest/cbor_reader.h"

#include <algorithm>

#include <cmath>
#include <cstring>
#include <limits>

namespace ampledger {
namespace {

constexpr std::uint8_t kBreak = 0xff;

bool IsValidUtf8(std::string_view s) {
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

}  // namespace

std::optional<std::int64_t> CborItem::AsInt64() const {
  constexpr auto kMax = static_cast<std::uint64_t>(std::numeric_limits<std::int64_t>::max());
  if (type == Type::kUnsigned && value <= kMax) return static_cast<std::int64_t>(value);
  if (type == Type::kNegative && value <= kMax) return -1 - static_cast<std::int64_t>(value);
  return std::nullopt;
}

double CborItem::AsDouble() const {
  switch (type) {
    case Type::kUnsigned: return static_cast<double>(value);
    case Type::kNegative: return -1.0 - static_cast<double>(value);
    case Type::kFloat: return number;
    default: return 0;
  }
}

double HalfToDouble(std::uint16_t half) {
  // RFC 8949 Appendix D, written out: sign, 5-bit exponent (bias 15), 10-bit fraction.
  const int exponent = (half >> 10) & 0x1f;
  const int fraction = half & 0x3ff;
  double magnitude;
  if (exponent == 0) {
    magnitude = std::ldexp(fraction, -24);  // subnormal
  } else if (exponent != 31) {
    magnitude = std::ldexp(fraction + 1024, exponent - 25);
  } else {
    magnitude = fraction == 0 ? std::numeric_limits<double>::infinity()
                              : std::numeric_limits<double>::quiet_NaN();
  }
  return (half & 0x8000) ? -magnitude : magnitude;
}

Result<CborItem> DecodeCbor(std::string_view bytes) {
  Decoder decoder(bytes);
  CborItem item;
  if (Status s = decoder.Item(&item, 0); !s.ok()) return s;
  if (!decoder.AtEnd()) return Status::InvalidArgument("CBOR: trailing bytes after the item");
  return item;
}

}  // namespace ampledger
