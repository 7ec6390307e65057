// daemon/ingest/pack_encoder.cpp
#include "daemon/ingest/pack_encoder.h"

namespace ampledger {
namespace {

double Seconds(UnixMs ms) { return static_cast<double>(ms) / 1000.0; }

struct QuantityOut {
  const char* suffix;
  const char* unit;
  std::optional<double> ChannelSample::*value;
  std::optional<double> ChannelSample::*sum;  // nullptr: no register on this quantity
};

constexpr QuantityOut kQuantities[] = {
    {"i", "A", &ChannelSample::amps, nullptr},
    {"v", "V", &ChannelSample::volts, nullptr},
    {"p", "W", &ChannelSample::real_watts, &ChannelSample::real_register_j},
    {"s", "VA", &ChannelSample::apparent_va, &ChannelSample::apparent_register_j},
    {"pf", "/", &ChannelSample::power_factor, nullptr},
    {"f", "Hz", &ChannelSample::frequency_hz, nullptr},
};

}  // namespace

const char* PackFormatName(PackFormat format) {
  switch (format) {
    case PackFormat::kJson: return "json";
    case PackFormat::kCbor: return "cbor";
    case PackFormat::kCoseMac0: return "cose_mac0";
  }
  return "unknown";
}

const char* AuthName(const PackEncoding& encoding) {
  return encoding.format == PackFormat::kCoseMac0 ? MacAlgorithmName(encoding.alg) : "none";
}

std::string EncodeSenml(const std::vector<SenmlOutRecord>& records, const PackEncoding& encoding,
                        std::string_view key, std::string_view kid) {
  switch (encoding.format) {
    case PackFormat::kJson: return WriteSenmlJson(records);
    case PackFormat::kCbor: return WriteSenmlCbor(records);
    case PackFormat::kCoseMac0: break;
  }
  return CreateCoseMac0(WriteSenmlCbor(records), key, encoding.alg, kid, encoding.tagged);
}

std::string EncodePack(const NodePack& pack, const PackEncoding& encoding, std::string_view key) {
  std::vector<SenmlOutRecord> records;
  SenmlOutRecord boot;
  boot.base_name = pack.node + "/";
  // Absolute times: the first sample's end is the base time and every t an offset from it.
  // Relative times: t is the offset from the send moment, and there is no base time.
  const UnixMs base_ms = encoding.relative_to ? *encoding.relative_to
                         : pack.samples.empty() ? 0
                                                : pack.samples[0].end_ms;
  if (!encoding.relative_to && !pack.samples.empty()) boot.base_time = Seconds(base_ms);
  boot.name = "boot";
  boot.value = pack.boot;
  records.push_back(boot);
  SenmlOutRecord seq;
  seq.name = "seq";
  seq.value = pack.seq;
  seq.update_time = Seconds(pack.interval_ms);
  records.push_back(seq);
  for (const ChannelSample& sample : pack.samples) {
    for (const QuantityOut& q : kQuantities) {
      const std::optional<double>& value = sample.*(q.value);
      const std::optional<double>* sum = q.sum ? &(sample.*(q.sum)) : nullptr;
      if (!value && !(sum && *sum)) continue;
      SenmlOutRecord r;
      r.name = sample.channel + "/" + q.suffix;
      r.unit = q.unit;
      r.value = value;
      if (sum) r.sum = *sum;
      if (sample.end_ms != base_ms) r.time = Seconds(sample.end_ms - base_ms);
      if (sample.duration_ms != pack.interval_ms) r.update_time = Seconds(sample.duration_ms);
      records.push_back(std::move(r));
    }
  }
  return EncodeSenml(records, encoding, key, pack.node);
}

}  // namespace ampledger
