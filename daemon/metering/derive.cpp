// daemon/metering/derive.cpp
#include "daemon/metering/derive.h"

#include <algorithm>
#include <cmath>
#include <string>

#include "daemon/metering/power.h"

namespace ampledger {
namespace {

// Rule 1 for one value: finite, and >= 0 when `non_negative`.
Status CheckValue(const ChannelSample& sample, const char* what,
                  const std::optional<double>& value, bool non_negative) {
  if (!value) return Status::Ok();
  if (!std::isfinite(*value)) {
    return Status::InvalidArgument("channel \"" + sample.channel + "\": " + what +
                                   " is not a finite number");
  }
  if (non_negative && *value < 0) {
    return Status::InvalidArgument("channel \"" + sample.channel + "\": " + what + " " +
                                   std::to_string(*value) + " is negative");
  }
  return Status::Ok();
}

Status CheckSample(const ChannelSample& sample) {
  struct Field {
    const char* what;
    const std::optional<double>& value;
    bool non_negative;
  };
  const Field fields[] = {
      {"current", sample.amps, true},
      {"voltage", sample.volts, true},
      {"real power", sample.real_watts, false},
      {"apparent power", sample.apparent_va, false},
      {"power factor", sample.power_factor, false},
      {"frequency", sample.frequency_hz, true},
      {"real energy register", sample.real_register_j, false},
      {"apparent energy register", sample.apparent_register_j, false},
  };
  for (const Field& field : fields) {
    Status status = CheckValue(sample, field.what, field.value, field.non_negative);
    if (!status.ok()) return status;
  }
  if (!sample.amps && !sample.real_watts && !sample.apparent_va) {
    return Status::InvalidArgument("channel \"" + sample.channel +
                                   "\": neither current nor power was sent");
  }
  return Status::Ok();
}

// Gain and sign (rules 2 and 3) of a value the CT's calibration scales.
std::optional<double> Calibrate(const std::optional<double>& value, double factor) {
  if (!value) return std::nullopt;
  return std::fabs(*value) * factor;
}

}  // namespace

double ResolveNominalVolts(const CircuitConfig& circuit, const SiteConfig& site) {
  if (circuit.nominal_volts > 0) return circuit.nominal_volts;
  return site.nominal_volts.empty() ? 0 : site.nominal_volts.front();
}

Result<ChannelReading> DeriveReading(const ChannelSample& sample, int channel_index,
                                     std::uint32_t boot, const ChannelConfig& channel,
                                     const CircuitConfig& circuit,
                                     const VoltageReference& voltage) {
  Status status = CheckSample(sample);
  if (!status.ok()) return status;
  status = CheckValue(sample, "reference voltage", voltage.measured_volts, true);
  if (!status.ok()) return status;

  ChannelReading reading;
  reading.channel = channel_index;
  reading.boot = boot;
  reading.end_ms = sample.end_ms;
  reading.duration_ms = sample.duration_ms;
  reading.frequency_hz = sample.frequency_hz;

  // Rule 4: the voltage the node (or its pack) measured, else nominal.
  std::optional<double> measured = sample.volts ? sample.volts : voltage.measured_volts;
  reading.volts_measured = measured.has_value();
  double volts = measured ? *measured : voltage.nominal_volts;

  // Rule 4b: one channel per leg of a 240 V circuit.
  const double legs = static_cast<double>(circuit.channels.size());
  if (legs > 1 && !circuit.one_leg_of_split_phase && volts > kMaxLegVolts) volts /= legs;

  // Rule 5: one leg of a split-phase 240 V load.
  double leg_factor = 1;
  if (circuit.one_leg_of_split_phase && volts <= kMaxLegVolts) leg_factor = 2;
  volts *= leg_factor;
  reading.volts = volts;

  // Rules 2, 3 and 5 on everything the node measured against its current (and leg voltage).
  double power_scale = channel.gain * leg_factor;
  std::optional<double> amps = Calibrate(sample.amps, channel.gain);
  std::optional<double> real = Calibrate(sample.real_watts, power_scale);
  std::optional<double> apparent = Calibrate(sample.apparent_va, power_scale);
  reading.real_register_j = Calibrate(sample.real_register_j, power_scale);
  reading.apparent_register_j = Calibrate(sample.apparent_register_j, power_scale);

  // Rule 7: current from S / V when the node sent only power.
  if (!amps) {
    double va = apparent ? *apparent : *real;
    amps = volts > 0 ? va / volts : 0;
  }

  // Rule 6: the noise floor silences an idle CT.
  if (*amps < channel.noise_floor_amps) {
    reading.amps = 0;
    reading.real_watts = 0;
    reading.apparent_va = 0;
    reading.quality = real ? Quality::kMeasured : Quality::kDerived;
    return reading;
  }
  reading.amps = *amps;

  // Rules 8 and 9.
  reading.apparent_va = apparent ? *apparent : ApparentPower(volts, reading.amps);
  if (real) {
    reading.real_watts = *real;
    reading.quality = Quality::kMeasured;
  } else if (sample.power_factor) {
    reading.real_watts = reading.apparent_va * std::min(std::fabs(*sample.power_factor), 1.0);
    reading.quality = Quality::kDerived;
  } else {
    reading.real_watts = reading.apparent_va * circuit.assumed_power_factor;
    reading.quality = Quality::kEstimated;
  }

  // Rule 10.
  reading.apparent_va = std::max(reading.apparent_va, reading.real_watts);
  return reading;
}

double PowerFactorOf(const ChannelReading& reading) {
  return std::clamp(PowerFactor(reading.real_watts, reading.apparent_va), 0.0, 1.0);
}

}  // namespace ampledger
