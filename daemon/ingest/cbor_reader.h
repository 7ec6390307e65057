// daemon/ingest/cbor_reader.h
// A small, strict CBOR (RFC 8949) reader for the structures ingest reads: SenML packs (RFC 8428
// section 6) and COSE_Mac0 (RFC 9052). Two steps, so that reading builds no tree and allocates
// nothing for the definite-length items nodes send:
//   1. CheckCbor() proves the bytes are exactly one well-formed item: no truncation, no
//      trailing bytes, no reserved additional-information values, text strings valid UTF-8,
//      "break" only where it belongs, nesting no deeper than kMaxCborDepth.
//   2. A CborReader walks the checked bytes item by item; each Read() returns the next item's
//      head (and a string's content as a view into the input).
// Indefinite-length strings, arrays and maps are accepted; half, single and double floats are
// all returned as double. Duplicate map keys are left for the reader of the map to judge.
// CheckCbor is a pure function; a CborReader belongs to one thread.
#pragma once

#include <cstdint>
#include <forward_list>
#include <optional>
#include <string>
#include <string_view>

#include "config/status.h"

namespace ampledger {

inline constexpr int kMaxCborDepth = 16;

// OK if `bytes` is exactly one well-formed data item. InvalidArgument ("CBOR: ...") on
// truncated or trailing bytes, reserved additional-information values, invalid UTF-8 in a
// text string, a "break" out of place, or nesting deeper than kMaxCborDepth.
Status CheckCbor(std::string_view bytes);

enum class CborType : std::uint8_t {
  kUnsigned,  // major type 0: `value`
  kNegative,  // major type 1: the integer -1 - `value`
  kBytes,     // major type 2: `bytes`
  kText,      // major type 3: `bytes` (valid UTF-8, as CheckCbor proved)
  kArray,     // major type 4: `value` items follow, or up to a break if `indefinite`
  kMap,       // major type 5: `value` key/value pairs follow, or up to a break if `indefinite`
  kTag,       // major type 6: tag number `value`; the tagged item follows
  kSimple,    // major type 7 simple value `value`: 20 false, 21 true, 22 null, 23 undefined
  kFloat,     // major type 7 half/single/double float: `number`
};

// The head of one item, as CborReader::Read() returns it.
struct CborHead {
  CborType type = CborType::kUnsigned;
  std::uint64_t value = 0;
  bool indefinite = false;  // arrays and maps: their entries end at a break
  double number = 0;
  // Strings: the content. A view into the reader's input, or for an indefinite-length string
  // into storage the reader keeps; valid while the reader lives.
  std::string_view bytes;

  bool IsInteger() const { return type == CborType::kUnsigned || type == CborType::kNegative; }
  bool IsContainer() const { return type == CborType::kArray || type == CborType::kMap; }
  bool IsBool() const { return type == CborType::kSimple && (value == 20 || value == 21); }
  bool IsNull() const { return type == CborType::kSimple && value == 22; }
  // The integer as int64, if it is an integer that fits.
  std::optional<std::int64_t> AsInt64() const;
  // Integers and floats as double (large integers round to the nearest double).
  double AsDouble() const;
};

// Walks bytes that passed CheckCbor (the whole input, or the start of an item inside input
// that did). On other bytes it never reads outside them, but what it returns is unspecified.
class CborReader {
 public:
  explicit CborReader(std::string_view checked) : in_(checked) {}

  // The next item's head; a string's content is consumed with it, a container's or tag's
  // content is not (read it with More()/Read(), or Skip() it).
  CborHead Read();

  // For a container whose head Read() returned: true if it has an entry at `index` (the
  // count of entries already read; a map entry is a key and a value). At the end of an
  // indefinite container, consumes its break.
  bool More(const CborHead& container, std::uint64_t index);

  // Consumes the rest of the item whose head is `head`: a container's entries, a tag's item.
  void SkipContent(const CborHead& head);
  // Consumes one whole item.
  void Skip() { SkipContent(Read()); }

  // The entries of a container whose head was just read, without consuming them.
  std::uint64_t CountEntries(const CborHead& container) const;

  std::size_t position() const { return pos_; }

 private:
  std::uint8_t Byte() { return pos_ < in_.size() ? static_cast<std::uint8_t>(in_[pos_++]) : 0xf7; }
  std::uint64_t Big(int count);
  std::uint64_t Argument(int info);

  std::string_view in_;
  std::size_t pos_ = 0;
  // The content of the indefinite-length strings read so far. A list, so that the views
  // handed out stay valid and a reader of definite-length items allocates nothing.
  std::forward_list<std::string> assembled_;
};

// IEEE 754 half precision (binary16) to double: subnormals, infinities and NaN included.
double HalfToDouble(std::uint16_t half);

}  // namespace ampledger
