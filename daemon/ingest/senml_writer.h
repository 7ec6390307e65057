// daemon/ingest/senml_writer.h
// Writes SenML records (RFC 8428) as JSON (section 5) or CBOR (section 6, integer labels).
// The caller chooses which base fields to use; this only spells them, in the order of the
// RFC's section 6 example (bn bt bu bver n u t v s ut), whole numbers as integers.
// Pure; any thread.
#pragma once

#include <optional>
#include <string>
#include <vector>

namespace ampledger {

struct SenmlOutRecord {
  std::optional<std::string> base_name;  // bn
  std::optional<double> base_time;       // bt
  std::optional<std::string> base_unit;  // bu
  std::optional<int> version;            // bver
  std::string name;                     // n, omitted when empty
  std::string unit;                     // u, omitted when empty
  std::optional<double> value;          // v
  std::optional<double> sum;            // s
  std::optional<double> time;           // t
  std::optional<double> update_time;    // ut
};

std::string WriteSenmlJson(const std::vector<SenmlOutRecord>& records);
std::string WriteSenmlCbor(const std::vector<SenmlOutRecord>& records);

}  // namespace ampledger
