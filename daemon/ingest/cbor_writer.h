// daemon/ingest/cbor_writer.h
// A small CBOR (RFC 8949) encoder for the structures ingest writes: SenML packs, COSE_Mac0
// messages and their MAC_structure. Definite lengths only; integers in their shortest form;
// Number() uses the preferred serialization of RFC 8949 section 4.2.2 (an integer when the
// value is a whole number that fits, else the shortest float that holds it exactly).
// Not thread-safe; one writer per message.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>

namespace ampledger {

class CborWriter {
 public:
  void Unsigned(std::uint64_t value) { Head(0, value); }
  void Int(std::int64_t value);
  void Bytes(std::string_view bytes);
  void Text(std::string_view text);
  void Array(std::uint64_t count) { Head(4, count); }
  void Map(std::uint64_t count) { Head(5, count); }
  void Tag(std::uint64_t tag) { Head(6, tag); }
  void Bool(bool value) { out_.push_back(static_cast<char>(value ? 0xf5 : 0xf4)); }
  void Number(double value);
  void Raw(std::string_view encoded) { out_.append(encoded); }  // an already-encoded item

  const std::string& bytes() const { return out_; }
  std::string Take() { return std::move(out_); }

 private:
  void Head(int major, std::uint64_t argument);

  std::string out_;
};

}  // namespace ampledger
