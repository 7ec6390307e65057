// daemon/ingest/cbor_reader.h
// A small, strict CBOR (RFC 8949) decoder for the structures ingest reads: SenML packs (RFC 8428
// section 6) and COSE_Mac0 (RFC 9052). It decodes one whole data item into a CborItem tree.
// Bounded by construction: every item consumes at least one input byte, so a tree never has
// more items than the input has bytes, and nesting deeper than kMaxCborDepth is refused.
// Indefinite-length strings, arrays and maps are accepted; half, single and double floats
// are all returned as double. Duplicate map keys are left for the reader of the map to judge.
// Pure functions; any thread.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "config/status.h"

namespace ampledger {

inline constexpr int kMaxCborDepth = 16;

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

// Decodes exactly one data item filling all of `bytes`. InvalidArgument on truncated or
// trailing bytes, reserved additional-information values, invalid UTF-8 in a text string,
// a "break" out of place, or nesting deeper than kMaxCborDepth.
Result<CborItem> DecodeCbor(std::string_view bytes);

// IEEE 754 half precision (binary16) to double: subnormals, infinities and NaN included.
double HalfToDouble(std::uint16_t half);

}  // namespace ampledger
