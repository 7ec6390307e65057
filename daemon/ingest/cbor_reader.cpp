// daemon/ingest/cbor_reader.cpp
#include "daemon/ingest/cbor_reader.h"

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

// Walks one item and everything in it, checking each rule; stores nothing. The checks and
// their order decide which message a malformed input gets, so they stay in this order. Each
// step returns false with `error_` set on the first broken rule.
class Checker {
 public:
  explicit Checker(std::string_view in) : in_(in) {}

  bool Item(int depth) {
    if (depth > kMaxCborDepth) return Fail("nesting deeper than 16");
    std::uint8_t initial;
    if (!Byte(&initial)) return Fail("truncated");
    const int major = initial >> 5;
    const int info = initial & 0x1f;
    if (initial == kBreak) return Fail("unexpected break");
    if (major == 7) return Simple(info);
    bool indefinite = false;
    std::uint64_t arg = 0;
    if (!Argument(major, info, &arg, &indefinite)) return false;
    switch (major) {
      case 0: case 1: return true;
      case 2: case 3: return String(major, arg, indefinite);
      case 4: case 5: return Container(major == 5 ? 2 : 1, arg, indefinite, depth);
      default: return Item(depth + 1);  // 6: the tagged item
    }
  }

  bool AtEnd() const { return pos_ == in_.size(); }
  const char* error() const { return error_; }

 private:
  bool Fail(const char* what) {
    error_ = what;
    return false;
  }

  bool Byte(std::uint8_t* b) {
    if (pos_ >= in_.size()) return false;
    *b = static_cast<std::uint8_t>(in_[pos_++]);
    return true;
  }

  bool Skip(std::size_t count) {
    if (in_.size() - pos_ < count) return false;
    pos_ += count;
    return true;
  }

  bool Argument(int major, int info, std::uint64_t* arg, bool* indefinite) {
    if (info < 24) { *arg = info; return true; }
    if (info <= 27) {
      const int count = 1 << (info - 24);
      if (in_.size() - pos_ < static_cast<std::size_t>(count)) return Fail("truncated");
      *arg = 0;
      for (int i = 0; i < count; ++i) *arg = (*arg << 8) | static_cast<std::uint8_t>(in_[pos_++]);
      return true;
    }
    if (info == 31 && major >= 2 && major <= 5) { *indefinite = true; return true; }
    return Fail("reserved additional information");
  }

  bool String(int major, std::uint64_t length, bool indefinite) {
    if (!indefinite) {
      if (length > in_.size() - pos_) return Fail("truncated string");
      const std::string_view content = in_.substr(pos_, length);
      pos_ += length;
      if (major == 3 && !IsValidUtf8(content)) return Fail("text string is not UTF-8");
      return true;
    }
    // Chunks: definite-length strings of the same major type, up to a break. A text string's
    // chunks are checked as UTF-8 together, as the reader hands them out.
    std::string text;
    for (;;) {
      std::uint8_t initial;
      if (!Byte(&initial)) return Fail("truncated");
      if (initial == kBreak) break;
      if ((initial >> 5) != major) return Fail("bad chunk in indefinite string");
      bool nested = false;
      std::uint64_t chunk = 0;
      if (!Argument(major, initial & 0x1f, &chunk, &nested)) return false;
      if (nested) return Fail("nested indefinite string");
      if (chunk > in_.size() - pos_) return Fail("truncated string");
      if (major == 3) text.append(in_.substr(pos_, chunk));
      pos_ += chunk;
    }
    if (major == 3 && !IsValidUtf8(text)) return Fail("text string is not UTF-8");
    return true;
  }

  bool Container(int per_entry, std::uint64_t count, bool indefinite, int depth) {
    for (std::uint64_t i = 0; indefinite || i < count; ++i) {
      if (indefinite) {
        if (pos_ >= in_.size()) return Fail("truncated");
        if (static_cast<std::uint8_t>(in_[pos_]) == kBreak) { ++pos_; return true; }
      }
      for (int k = 0; k < per_entry; ++k) {
        if (pos_ >= in_.size()) return Fail("truncated");
        if (!Item(depth + 1)) return false;
      }
    }
    return true;
  }

  bool Simple(int info) {
    switch (info) {
      case 24: {
        std::uint8_t value;
        if (!Byte(&value)) return Fail("truncated");
        if (value < 32) return Fail("simple value in two bytes below 32");
        return true;
      }
      case 25: return Skip(2) || Fail("truncated");
      case 26: return Skip(4) || Fail("truncated");
      case 27: return Skip(8) || Fail("truncated");
      default:
        if (info >= 28) return Fail("reserved additional information");
        return true;
    }
  }

  std::string_view in_;
  std::size_t pos_ = 0;
  const char* error_ = "";
};

}  // namespace

Status CheckCbor(std::string_view bytes) {
  Checker checker(bytes);
  if (!checker.Item(0)) return Status::InvalidArgument(std::string("CBOR: ") + checker.error());
  if (!checker.AtEnd()) return Status::InvalidArgument("CBOR: trailing bytes after the item");
  return Status::Ok();
}

std::optional<std::int64_t> CborHead::AsInt64() const {
  constexpr auto kMax = static_cast<std::uint64_t>(std::numeric_limits<std::int64_t>::max());
  if (type == CborType::kUnsigned && value <= kMax) return static_cast<std::int64_t>(value);
  if (type == CborType::kNegative && value <= kMax) return -1 - static_cast<std::int64_t>(value);
  return std::nullopt;
}

double CborHead::AsDouble() const {
  switch (type) {
    case CborType::kUnsigned: return static_cast<double>(value);
    case CborType::kNegative: return -1.0 - static_cast<double>(value);
    case CborType::kFloat: return number;
    default: return 0;
  }
}

std::uint64_t CborReader::Big(int count) {
  std::uint64_t v = 0;
  for (int i = 0; i < count; ++i) v = (v << 8) | Byte();
  return v;
}

std::uint64_t CborReader::Argument(int info) {
  if (info < 24) return static_cast<std::uint64_t>(info);
  if (info <= 27) return Big(1 << (info - 24));
  return 0;  // 31: indefinite length
}

CborHead CborReader::Read() {
  CborHead head;
  const std::uint8_t initial = Byte();
  const int major = initial >> 5;
  const int info = initial & 0x1f;
  if (major == 7) {
    switch (info) {
      case 24: head.type = CborType::kSimple; head.value = Byte(); return head;
      case 25:
        head.type = CborType::kFloat;
        head.number = HalfToDouble(static_cast<std::uint16_t>(Big(2)));
        return head;
      case 26: {
        const auto word = static_cast<std::uint32_t>(Big(4));
        float f;
        std::memcpy(&f, &word, sizeof f);
        head.type = CborType::kFloat;
        head.number = f;
        return head;
      }
      case 27: {
        const std::uint64_t bits = Big(8);
        double d;
        std::memcpy(&d, &bits, sizeof d);
        head.type = CborType::kFloat;
        head.number = d;
        return head;
      }
      default:
        head.type = CborType::kSimple;
        head.value = static_cast<std::uint64_t>(info);
        return head;
    }
  }
  static constexpr CborType kTypes[] = {CborType::kUnsigned, CborType::kNegative,
                                        CborType::kBytes,    CborType::kText,
                                        CborType::kArray,    CborType::kMap,
                                        CborType::kTag};
  head.type = kTypes[major];
  head.indefinite = info == 31;
  head.value = Argument(info);
  if (major != 2 && major != 3) return head;
  if (!head.indefinite) {
    const std::size_t length = head.value < in_.size() - pos_ ? head.value : in_.size() - pos_;
    head.bytes = in_.substr(pos_, length);
    pos_ += length;
    return head;
  }
  // Rare: a chunked string is joined once and kept, so its view stays valid.
  std::string& joined = assembled_.emplace_front();
  for (std::uint8_t chunk_head = Byte(); chunk_head != kBreak && pos_ < in_.size();
       chunk_head = Byte()) {
    const std::uint64_t length = Argument(chunk_head & 0x1f);
    const std::size_t taken = length < in_.size() - pos_ ? length : in_.size() - pos_;
    joined.append(in_.substr(pos_, taken));
    pos_ += taken;
  }
  head.bytes = joined;
  return head;
}

bool CborReader::More(const CborHead& container, std::uint64_t index) {
  if (!container.indefinite) return index < container.value;
  if (pos_ >= in_.size()) return false;
  if (static_cast<std::uint8_t>(in_[pos_]) != kBreak) return true;
  ++pos_;
  return false;
}

void CborReader::SkipContent(const CborHead& head) {
  if (head.type == CborType::kTag) {
    Skip();
    return;
  }
  if (!head.IsContainer()) return;
  const int per_entry = head.type == CborType::kMap ? 2 : 1;
  for (std::uint64_t i = 0; More(head, i) && pos_ < in_.size(); ++i) {
    for (int k = 0; k < per_entry; ++k) Skip();
  }
}

std::uint64_t CborReader::CountEntries(const CborHead& container) const {
  if (!container.indefinite) return container.value;
  CborReader probe(in_);
  probe.pos_ = pos_;
  std::uint64_t count = 0;
  while (probe.More(container, count) && probe.pos_ < in_.size()) {
    probe.Skip();
    if (container.type == CborType::kMap) probe.Skip();
    ++count;
  }
  return count;
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

}  // namespace ampledger
