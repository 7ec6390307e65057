// daemon/ingest/node_pack.cpp
#include "daemon/ingest/node_pack.h"

#include <cmath>
#include <map>
#include <optional>
#include <utility>

namespace ampledger {
namespace {

enum class Quantity { kCurrent, kVoltage, kRealPower, kApparentPower, kPowerFactor, kFrequency };

struct UnitScale {
  Quantity quantity;
  const char* unit;
  double scale;    // SI value = value * scale (RFC 8798 Table 2 scales; offsets are all 0 here)
  bool secondary;  // an RFC 8798 secondary unit: needs SenML version 26 (RFC 9100 feature 4)
};

// Record name suffix -> quantity, and the units each accepts (RFC 8428 Table 6, RFC 8798).
constexpr std::pair<const char*, Quantity> kQuantityNames[] = {
    {"i", Quantity::kCurrent},       {"v", Quantity::kVoltage},
    {"p", Quantity::kRealPower},     {"s", Quantity::kApparentPower},
    {"pf", Quantity::kPowerFactor},  {"f", Quantity::kFrequency},
};

constexpr UnitScale kUnits[] = {
    {Quantity::kCurrent, "A", 1, false},        {Quantity::kCurrent, "mA", 1e-3, true},
    {Quantity::kVoltage, "V", 1, false},        {Quantity::kVoltage, "mV", 1e-3, true},
    {Quantity::kRealPower, "W", 1, false},      {Quantity::kRealPower, "kW", 1e3, true},
    {Quantity::kApparentPower, "VA", 1, false}, {Quantity::kApparentPower, "kVA", 1e3, true},
    // RFC 8428 Note 2: "%" is a NOT RECOMMENDED alias of "/", a ratio; "/100" is percent.
    {Quantity::kPowerFactor, "/", 1, false},    {Quantity::kPowerFactor, "%", 1, false},
    {Quantity::kPowerFactor, "/100", 1e-2, true},
    {Quantity::kFrequency, "Hz", 1, false},
};

constexpr double kMaxCounter = 4294967295.0;  // boot and seq are unsigned 32-bit

Refusal Fail(RefusalReason reason, const SenmlRecord& record, const std::string& detail) {
  return Refuse(reason, "\"" + record.name + "\": " + detail);
}

std::optional<Quantity> QuantityFromName(std::string_view name) {
  for (const auto& [text, quantity] : kQuantityNames) {
    if (name == text) return quantity;
  }
  return std::nullopt;
}

const UnitScale* FindUnit(Quantity quantity, const std::string& unit) {
  for (const UnitScale& u : kUnits) {
    if (u.quantity == quantity && unit == u.unit) return &u;
  }
  return nullptr;
}

std::string UnitsOf(Quantity quantity) {
  std::string list;
  for (const UnitScale& u : kUnits) {
    if (u.quantity != quantity) continue;
    list += list.empty() ? "" : ", ";
    list += u.unit;
  }
  return list;
}

// Checks the value's domain for its quantity (in SI units).
bool InRange(Quantity quantity, double si) {
  switch (quantity) {
    case Quantity::kCurrent:
    case Quantity::kVoltage:
    case Quantity::kApparentPower: return si >= 0;
    case Quantity::kRealPower: return true;  // a node may see export as negative power
    case Quantity::kPowerFactor: return si >= -1 && si <= 1;
    case Quantity::kFrequency: return si > 0;
  }
  return false;
}

struct PendingSample {
  ChannelSample sample;
  std::optional<std::int32_t> own_duration_ms;
};

class Interpreter {
 public:
  Interpreter(const SenmlPack& pack, UnixMs now, const IngestConfig& limits)
      : pack_(pack), now_seconds_(static_cast<double>(now) / 1000.0), limits_(limits) {}

  DecodeResult<NodePack> Run() {
    for (const SenmlRecord& record : pack_.records) {
      if (auto refusal = Record(record)) return *refusal;
    }
    if (out_.node.empty()) return Refuse(RefusalReason::kMalformed, "empty pack");
    if (!have_boot_) return Refuse(RefusalReason::kMalformed, "no boot record");
    if (!have_seq_) return Refuse(RefusalReason::kMalformed, "no seq record");
    for (auto& [key, pending] : samples_) {
      pending.sample.duration_ms = pending.own_duration_ms.value_or(out_.interval_ms);
      out_.samples.push_back(std::move(pending.sample));
    }
    return std::move(out_);
  }

 private:
  std::optional<Refusal> Record(const SenmlRecord& record) {
    const std::size_t slash = record.name.find('/');
    if (slash == std::string::npos) {
      return Fail(RefusalReason::kUnknownRecord, record, "expected <node>/<record>");
    }
    const std::string_view name = record.name;
    const std::string_view node = name.substr(0, slash);
    const std::string_view rest = name.substr(slash + 1);
    if (out_.node.empty()) {
      out_.node = node;
    } else if (node != out_.node) {
      return Fail(RefusalReason::kMixedNodes, record, "node \"" + std::string(node) +
                                                          "\" after \"" + out_.node + "\"");
    }
    if (rest == "boot" || rest == "seq") return Counter(record, rest == "boot");
    const std::size_t split = rest.find('/');
    if (split == std::string::npos || split == 0 || rest.find('/', split + 1) != std::string::npos) {
      return Fail(RefusalReason::kUnknownRecord, record, "expected boot, seq or <channel>/<quantity>");
    }
    const std::optional<Quantity> quantity = QuantityFromName(rest.substr(split + 1));
    if (!quantity) {
      return Fail(RefusalReason::kUnknownRecord, record,
                  "unknown quantity \"" + std::string(rest.substr(split + 1)) +
                      "\" (i, v, p, s, pf, f)");
    }
    return Measurement(record, rest.substr(0, split), *quantity);
  }

  std::optional<Refusal> Counter(const SenmlRecord& record, bool is_boot) {
    bool& seen = is_boot ? have_boot_ : have_seq_;
    if (seen) return Fail(RefusalReason::kMalformed, record, "appears twice");
    seen = true;
    if (!record.value) return Fail(RefusalReason::kMalformed, record, "needs a numeric v");
    if (record.sum) return Fail(RefusalReason::kMalformed, record, "must not have a sum");
    if (!record.unit.empty() && record.unit != "count") {
      return Fail(RefusalReason::kUnitMismatch, record, "unit \"" + record.unit +
                                                             "\" (expected none or count)");
    }
    const double v = *record.value;
    if (v != std::floor(v)) return Fail(RefusalReason::kMalformed, record, "not an integer");
    if (v < 0 || v > kMaxCounter) {
      return Fail(RefusalReason::kOutOfRange, record, "outside 0..4294967295");
    }
    (is_boot ? out_.boot : out_.seq) = static_cast<std::uint32_t>(v);
    if (!is_boot) {
      if (!record.update_time) {
        return Fail(RefusalReason::kMalformed, record, "needs ut (the reporting interval)");
      }
      std::optional<std::int32_t> ms = DurationMs(*record.update_time);
      if (!ms) return Fail(RefusalReason::kOutOfRange, record, "ut outside (0, 86400] s");
      out_.interval_ms = *ms;
    }
    return std::nullopt;
  }

  static std::optional<std::int32_t> DurationMs(double seconds) {
    if (!(seconds > 0 && seconds <= kMaxIntervalSeconds)) return std::nullopt;
    const auto ms = static_cast<std::int32_t>(std::llround(seconds * 1000));
    if (ms <= 0) return std::nullopt;
    return ms;
  }

  std::optional<Refusal> Measurement(const SenmlRecord& record, std::string_view channel,
                                     Quantity quantity) {
    if (record.string_value || record.bool_value || record.data_value) {
      return Fail(RefusalReason::kMalformed, record, "needs a numeric v, not vs/vb/vd");
    }
    const UnitScale* unit = FindUnit(quantity, record.unit);
    if (!unit) {
      return Fail(RefusalReason::kUnitMismatch, record,
                  "unit \"" + record.unit + "\" (expected " + UnitsOf(quantity) + ")");
    }
    if (unit->secondary && pack_.version != kSenmlSecondaryUnitsVersion) {
      return Fail(RefusalReason::kUnitMismatch, record,
                  "secondary unit \"" + record.unit +
                      "\" needs bver 26 (RFC 8798 section 3, RFC 9100)");
    }
    const bool has_register =
        quantity == Quantity::kRealPower || quantity == Quantity::kApparentPower;
    if (record.sum && !has_register) {
      return Fail(RefusalReason::kMalformed, record, "a sum (register) belongs on p or s only");
    }
    if (std::optional<Refusal> clock = Clock(record)) return clock;

    const auto end_ms = static_cast<UnixMs>(std::llround(record.time * 1000));
    PendingSample& pending = samples_[{end_ms, std::string(channel)}];
    if (pending.sample.channel.empty()) {
      pending.sample.channel = channel;
      pending.sample.end_ms = end_ms;
    }
    if (record.update_time) {
      std::optional<std::int32_t> ms = DurationMs(*record.update_time);
      if (!ms) return Fail(RefusalReason::kOutOfRange, record, "ut outside (0, 86400] s");
      if (pending.own_duration_ms && *pending.own_duration_ms != *ms) {
        return Fail(RefusalReason::kMalformed, record, "ut differs within one interval");
      }
      pending.own_duration_ms = ms;
    }
    if (record.value) {
      const double si = *record.value * unit->scale;
      if (!InRange(quantity, si)) return Fail(RefusalReason::kOutOfRange, record, "value out of range");
      std::optional<double>& slot = ValueSlot(&pending.sample, quantity);
      if (slot) return Fail(RefusalReason::kMalformed, record, "twice for one interval");
      slot = si;
    }
    if (record.sum) {
      const double si = *record.sum * unit->scale;  // unit x s, e.g. W s = J
      if (si < 0) return Fail(RefusalReason::kOutOfRange, record, "negative register");
      std::optional<double>& slot = quantity == Quantity::kRealPower
                                        ? pending.sample.real_register_j
                                        : pending.sample.apparent_register_j;
      if (slot) return Fail(RefusalReason::kMalformed, record, "register twice for one interval");
      slot = si;
    }
    return std::nullopt;
  }

  std::optional<Refusal> Clock(const SenmlRecord& record) const {
    if (record.time > now_seconds_ + limits_.max_future_seconds) {
      return Fail(RefusalReason::kClock, record,
                  "time " + std::to_string(record.time) + " is in the future");
    }
    if (record.time < now_seconds_ - limits_.resend_horizon_seconds) {
      return Fail(RefusalReason::kClock, record,
                  "time " + std::to_string(record.time) + " is older than the resend horizon");
    }
    return std::nullopt;
  }

  static std::optional<double>& ValueSlot(ChannelSample* s, Quantity quantity) {
    switch (quantity) {
      case Quantity::kCurrent: return s->amps;
      case Quantity::kVoltage: return s->volts;
      case Quantity::kRealPower: return s->real_watts;
      case Quantity::kApparentPower: return s->apparent_va;
      case Quantity::kPowerFactor: return s->power_factor;
      case Quantity::kFrequency: break;
    }
    return s->frequency_hz;
  }

  const SenmlPack& pack_;
  const double now_seconds_;
  const IngestConfig& limits_;
  NodePack out_;
  bool have_boot_ = false;
  bool have_seq_ = false;
  std::map<std::pair<UnixMs, std::string>, PendingSample> samples_;
};

}  // namespace

DecodeResult<NodePack> InterpretNodePack(const SenmlPack& pack, UnixMs now,
                                         const IngestConfig& limits) {
  return Interpreter(pack, now, limits).Run();
}

}  // namespace ampledger
