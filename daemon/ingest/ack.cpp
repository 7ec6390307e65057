// daemon/ingest/ack.cpp
#include "daemon/ingest/ack.h"

#include <cmath>

#include "daemon/ingest/cose_mac0.h"
#include "daemon/ingest/datagram.h"
#include "daemon/ingest/senml.h"

namespace ampledger {
namespace {

// Acknowledgements carry no times; "now" only matters for a malformed one.
constexpr double kAnyNow = 0;

std::optional<std::uint32_t> Counter(const SenmlRecord& record) {
  if (!record.value || *record.value != std::floor(*record.value) || *record.value < 0 ||
      *record.value > 4294967295.0) {
    return std::nullopt;
  }
  return static_cast<std::uint32_t>(*record.value);
}

}  // namespace

std::string EncodeAck(const Ack& ack, const PackEncoding& encoding, std::string_view key) {
  SenmlOutRecord boot;
  boot.base_name = ack.node + "/";
  boot.name = "ack_boot";
  boot.value = ack.boot;
  SenmlOutRecord seq;
  seq.name = "ack_seq";
  seq.value = ack.seq;
  return EncodeSenml({boot, seq}, encoding, key, ack.node);
}

DecodeResult<Ack> DecodeAck(std::string_view bytes, std::string_view node, std::string_view key) {
  const PackFormat format = ClassifyDatagram(bytes);
  std::optional<DecodeResult<SenmlPack>> senml;
  if (format == PackFormat::kCoseMac0) {
    DecodeResult<CoseMac0> cose = ParseCoseMac0(bytes);
    if (!cose.ok()) return cose.refusal();
    if (cose->kid != node) return Refuse(RefusalReason::kKidMismatch, "ack kid is another node");
    if (!VerifyCoseMac0(*cose, key)) return Refuse(RefusalReason::kBadTag, "ack tag");
    senml.emplace(DecodeSenmlCbor(cose->payload, kAnyNow));
  } else {
    if (!key.empty()) return Refuse(RefusalReason::kAuthRequired, "plain ack");
    senml.emplace(format == PackFormat::kJson ? DecodeSenmlJson(bytes, kAnyNow)
                                              : DecodeSenmlCbor(bytes, kAnyNow));
  }
  if (!senml->ok()) return senml->refusal();
  Ack ack;
  ack.node = std::string(node);
  bool have_boot = false, have_seq = false;
  const std::string prefix = std::string(node) + "/";
  for (const SenmlRecord& record : senml->value().records) {
    if (record.name.rfind(prefix, 0) != 0) {
      return Refuse(RefusalReason::kMixedNodes, "ack record \"" + record.name + "\"");
    }
    const std::string rest = record.name.substr(prefix.size());
    bool* seen = rest == "ack_boot" ? &have_boot : rest == "ack_seq" ? &have_seq : nullptr;
    if (!seen) return Refuse(RefusalReason::kUnknownRecord, "ack record \"" + record.name + "\"");
    const std::optional<std::uint32_t> value = Counter(record);
    if (*seen || !value) return Refuse(RefusalReason::kMalformed, "ack record \"" + rest + "\"");
    *seen = true;
    (rest == "ack_boot" ? ack.boot : ack.seq) = *value;
  }
  if (!have_boot || !have_seq) return Refuse(RefusalReason::kMalformed, "ack lacks boot or seq");
  return ack;
}

}  // namespace ampledger
