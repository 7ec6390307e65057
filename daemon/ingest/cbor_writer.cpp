// daemon/ingest/cbor_writer.cpp
#include "daemon/ingest/cbor_writer.h"

#include <cmath>
#include <cstring>

namespace ampledger {
namespace {

// The binary16 bits of `value` if it converts exactly, else -1.
int ExactHalf(double value) {
  if (std::isnan(value)) return 0x7e00;
  const bool negative = std::signbit(value);
  const double magnitude = std::fabs(value);
  int sign = negative ? 0x8000 : 0;
  if (std::isinf(value)) return sign | 0x7c00;
  if (magnitude == 0) return sign;
  int exponent;
  const double mantissa = std::frexp(magnitude, &exponent);  // magnitude = mantissa * 2^exponent
  // Normal halves: 2^-14 <= magnitude < 65520, 11 significant bits.
  if (exponent >= -13 && exponent <= 16) {
    const double scaled = std::ldexp(mantissa, 11);  // in [1024, 2048)
    if (scaled != std::floor(scaled)) return -1;
    return sign | ((exponent + 14) << 10) | (static_cast<int>(scaled) - 1024);
  }
  // Subnormal halves: multiples of 2^-24 below 2^-14.
  const double units = std::ldexp(magnitude, 24);
  if (exponent < -13 && units == std::floor(units) && units < 1024) {
    return sign | static_cast<int>(units);
  }
  return -1;
}

}  // namespace

void CborWriter::Head(int major, std::uint64_t argument) {
  const auto type = static_cast<std::uint8_t>(major << 5);
  int extra = 0;
  if (argument < 24) {
    out_.push_back(static_cast<char>(type | argument));
    return;
  } else if (argument <= 0xff) {
    out_.push_back(static_cast<char>(type | 24));
    extra = 1;
  } else if (argument <= 0xffff) {
    out_.push_back(static_cast<char>(type | 25));
    extra = 2;
  } else if (argument <= 0xffffffffu) {
    out_.push_back(static_cast<char>(type | 26));
    extra = 4;
  } else {
    out_.push_back(static_cast<char>(type | 27));
    extra = 8;
  }
  for (int i = extra - 1; i >= 0; --i) out_.push_back(static_cast<char>(argument >> (8 * i)));
}

void CborWriter::Int(std::int64_t value) {
  if (value >= 0) {
    Head(0, static_cast<std::uint64_t>(value));
  } else {
    Head(1, static_cast<std::uint64_t>(-1 - value));
  }
}

void CborWriter::Bytes(std::string_view bytes) {
  Head(2, bytes.size());
  out_.append(bytes);
}

void CborWriter::Text(std::string_view text) {
  Head(3, text.size());
  out_.append(text);
}

void CborWriter::Number(double value) {
  constexpr double kTwo63 = 9223372036854775808.0;
  if (std::isfinite(value) && value == std::floor(value) && value >= -kTwo63 && value < kTwo63 &&
      !(value == 0 && std::signbit(value))) {
    Int(static_cast<std::int64_t>(value));
    return;
  }
  if (const int half = ExactHalf(value); half >= 0) {
    out_.push_back(static_cast<char>(0xf9));
    out_.push_back(static_cast<char>(half >> 8));
    out_.push_back(static_cast<char>(half & 0xff));
    return;
  }
  if (const auto single = static_cast<float>(value); static_cast<double>(single) == value) {
    std::uint32_t bits;
    std::memcpy(&bits, &single, sizeof bits);
    out_.push_back(static_cast<char>(0xfa));
    for (int i = 3; i >= 0; --i) out_.push_back(static_cast<char>(bits >> (8 * i)));
    return;
  }
  std::uint64_t bits;
  std::memcpy(&bits, &value, sizeof bits);
  out_.push_back(static_cast<char>(0xfb));
  for (int i = 7; i >= 0; --i) out_.push_back(static_cast<char>(bits >> (8 * i)));
}

}  // namespace ampledger
