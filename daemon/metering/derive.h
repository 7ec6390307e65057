// daemon/metering/derive.h
// Turns what a node sent for one channel (ChannelSample) into a calibrated, complete
// ChannelReading for the circuit that channel measures: calibration gain, noise floor,
// voltage reference, split-phase legs, apparent and real power with their quality.
// Pure functions; any thread may call them.
//
// The rules, in the order they apply:
//  1. Validation: every value present must be finite; RMS current, voltage and frequency
//     must be >= 0. A sample needs current, real power or apparent power.
//  2. Sign: a circuit has one direction (consumption or export) in the config, so the sign of
//     the power a node reports says only which way round its CT is clamped. Real power,
//     apparent power, power factor and the energy registers are taken as magnitudes (some
//     nodes sign S and PF like P): a consumption CT clamped backwards reads the same as one
//     clamped the right way, and an export (solar) circuit stores positive power and energy;
//     CircuitConfig::direction says it was exported. Consequence: a circuit whose flow
//     really reverses (a battery) must be split into an import and an export circuit
//     measured by separate channels.
//  3. Gain: ChannelConfig::gain multiplies current, real and apparent power and both
//     registers (it corrects the CT and burden; it does not touch voltage).
//  4. Voltage: the sample's own volts, else VoltageReference::measured_volts (the circuit's
//     voltage_from channel in the same pack), both "measured"; else the nominal volts.
//  4b. Legs: a circuit fed by several channels, one CT on each leg of a 240 V split-phase
//     load (a water heater, a dryer), has each channel carry its own leg's current at the
//     leg voltage: P = V_leg x I_1 + V_leg x I_2. A voltage above kMaxLegVolts (the circuit's
//     nominal 240 V, or a line-to-line measurement) is divided among the channels, 120 V each.
//  5. Split phase (CircuitConfig::one_leg_of_split_phase): a 240 V load measured by one CT on
//     one leg carries the same current on the other leg, so its voltage is line to line. A
//     voltage of at most kMaxLegVolts is taken as a leg (line-to-neutral) voltage and doubled:
//     a measured 121.3 V gives 242.6 V; a nominal 120 V gives 240 V. A higher voltage is
//     already line to line and kept. When doubled, the power and registers the node reported
//     were measured against one leg and are doubled too (the two legs are taken as balanced,
//     common practice for 120/240 V split-phase service).
//  6. Noise floor: if the calibrated current is below ChannelConfig::noise_floor_amps
//     (strictly below; equal is kept) current, real and apparent power read zero. The
//     registers are the node's own cumulative counts and are passed through (after gain and
//     sign), so energy stays continuous. The zero is kMeasured when the node sent real power,
//     else kDerived (zero current needs no assumed power factor).
//  7. Current: the sample's amps; without them, S / V (or 0 when V is 0).
//  8. Apparent power: the node's S if sent, else V x I.
//  9. Real power: the node's P if sent (quality kMeasured); else S x the node's power factor if
//     sent (kDerived: computed from measured values); else S x the circuit's
//     assumed_power_factor (kEstimated).
// 10. S >= P always: a measured P above S (timing skew between the node's measurements, or
//     a nominal voltage below the real one) raises S to P.
#pragma once

#include <cstdint>
#include <optional>

#include "config/config.h"
#include "config/status.h"
#include "daemon/metering/reading.h"

namespace ampledger {

// The highest voltage taken as one leg (line to neutral) of a split-phase supply. 120 V
// service stays below 127 V in ANSI C84.1 range B; 150 V leaves margin and stays far below
// the 208-240 V of a line-to-line measurement. (Common practice; figure from memory.)
constexpr double kMaxLegVolts = 150.0;

// Where a reading's voltage comes from, resolved by the caller from the config and the pack.
struct VoltageReference {
  double nominal_volts = 0;              // ResolveNominalVolts(); used when nothing was measured
  std::optional<double> measured_volts;  // the circuit's voltage_from channel's volts in this pack
};

// The circuit's nominal voltage, or the site's first nominal voltage when the circuit's is 0.
// Precondition (checked by the config loader): site.nominal_volts is not empty.
double ResolveNominalVolts(const CircuitConfig& circuit, const SiteConfig& site);

// Derives the reading of `sample`, which node boot `boot` sent for `channel` (flat index
// `channel_index` in Config order), a channel of `circuit`. Returns InvalidArgument naming the
// channel and the bad value when the sample breaks rule 1 above; nothing else fails.
Result<ChannelReading> DeriveReading(const ChannelSample& sample, int channel_index,
                                     std::uint32_t boot, const ChannelConfig& channel,
                                     const CircuitConfig& circuit,
                                     const VoltageReference& voltage);

// PF = P / S of a derived reading, clamped to [0, 1]; 0 when S is 0.
double PowerFactorOf(const ChannelReading& reading);

}  // namespace ampledger
