// daemon/ingest/senml_writer.cpp
#include "daemon/ingest/senml_writer.h"

#include <cmath>
#include <cstdint>

#include <nlohmann/json.hpp>

#include "daemon/ingest/cbor_writer.h"

namespace ampledger {
namespace {

// RFC 8428 Table 4.
constexpr int kVersion = -1, kBaseName = -2, kBaseTime = -3, kBaseUnit = -4, kName = 0,
              kUnit = 1, kValue = 2, kSum = 5, kTime = 6, kUpdateTime = 7;

int FieldCount(const SenmlOutRecord& r) {
  return (r.version ? 1 : 0) + (r.base_name ? 1 : 0) + (r.base_time ? 1 : 0) +
         (r.base_unit ? 1 : 0) +
         (r.name.empty() ? 0 : 1) + (r.unit.empty() ? 0 : 1) + (r.value ? 1 : 0) +
         (r.sum ? 1 : 0) + (r.time ? 1 : 0) + (r.update_time ? 1 : 0);
}

// A JSON number: whole numbers that a double holds exactly as integers ("v":4, not 4.0).
nlohmann::ordered_json JsonNumber(double v) {
  if (v == std::floor(v) && std::fabs(v) < 9007199254740992.0 && !(v == 0 && std::signbit(v))) {
    return static_cast<std::int64_t>(v);
  }
  return v;
}

}  // namespace

std::string WriteSenmlJson(const std::vector<SenmlOutRecord>& records) {
  nlohmann::ordered_json pack = nlohmann::ordered_json::array();
  for (const SenmlOutRecord& r : records) {
    nlohmann::ordered_json j = nlohmann::ordered_json::object();
    if (r.base_name) j["bn"] = *r.base_name;
    if (r.base_time) j["bt"] = JsonNumber(*r.base_time);
    if (r.base_unit) j["bu"] = *r.base_unit;
    if (r.version) j["bver"] = *r.version;
    if (!r.name.empty()) j["n"] = r.name;
    if (!r.unit.empty()) j["u"] = r.unit;
    if (r.time) j["t"] = JsonNumber(*r.time);
    if (r.value) j["v"] = JsonNumber(*r.value);
    if (r.sum) j["s"] = JsonNumber(*r.sum);
    if (r.update_time) j["ut"] = JsonNumber(*r.update_time);
    pack.push_back(std::move(j));
  }
  return pack.dump();
}

std::string WriteSenmlCbor(const std::vector<SenmlOutRecord>& records) {
  CborWriter w;
  w.Array(records.size());
  for (const SenmlOutRecord& r : records) {
    w.Map(static_cast<std::uint64_t>(FieldCount(r)));
    if (r.base_name) { w.Int(kBaseName); w.Text(*r.base_name); }
    if (r.base_time) { w.Int(kBaseTime); w.Number(*r.base_time); }
    if (r.base_unit) { w.Int(kBaseUnit); w.Text(*r.base_unit); }
    if (r.version) { w.Int(kVersion); w.Unsigned(static_cast<std::uint64_t>(*r.version)); }
    if (!r.name.empty()) { w.Int(kName); w.Text(r.name); }
    if (!r.unit.empty()) { w.Int(kUnit); w.Text(r.unit); }
    if (r.time) { w.Int(kTime); w.Number(*r.time); }
    if (r.value) { w.Int(kValue); w.Number(*r.value); }
    if (r.sum) { w.Int(kSum); w.Number(*r.sum); }
    if (r.update_time) { w.Int(kUpdateTime); w.Number(*r.update_time); }
  }
  return w.Take();
}

}  // namespace ampledger
